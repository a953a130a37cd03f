// rxtrain command line: parses, dispatches to one subcommand, and maps the
// exceptions of the core to exit codes. Nothing else catches them.
#include <fmt/format.h>

#include <CLI/CLI.hpp>
#include <cstdio>
#include <exception>
#include <memory>
#include <string>
#include <vector>

#include "commands.hpp"
#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/report/atomic_file.hpp"

namespace {

struct CommandEntry {
  const char* name;
  const char* help;
  rxtrain::cli::Action (*setup)(CLI::App&);
};

// One table of every subcommand.
constexpr CommandEntry kCommands[] = {
    {"run", "Run a case: rate and size every stage of the train, print the stage table",
     rxtrain::cli::setup_run},
    {"check", "Validate a case file (units, equations, element balances) without running it",
     rxtrain::cli::setup_check},
    {"thermo", "Tabulate K(T), dH_r(T) and dG0(T) of every reaction over a temperature range",
     rxtrain::cli::setup_thermo},
    {"staging",
     "Interstage-cooling check: can the train reach its target within the catalyst's "
     "temperature limits, and how many adiabatic beds with intercoolers does it take",
     rxtrain::cli::setup_staging},
    {"compare",
     "Compare layouts: every order of the reactor stages, as written, all adiabatic and all "
     "isothermal; best first",
     rxtrain::cli::setup_compare},
    {"optimize",
     "Optimal adiabatic beds with intercoolers: inlet temperatures and bed conversions of least "
     "total catalyst for the target, within the catalyst's temperature window",
     rxtrain::cli::setup_optimize},
    {"sweep",
     "Run a case over a grid of inputs (--vary) or a Monte Carlo sample (--sample): one row "
     "per run, percentiles, design margin; parallel, shardable",
     rxtrain::cli::setup_sweep},
    {"merge", "Merge the CSVs of the shards of one sweep into the CSV of the whole study",
     rxtrain::cli::setup_merge},
    {"stability",
     "Where a stirred tank can flip: its steady states and their stability as one case field "
     "varies (continuation), the ignition and extinction points and the hysteresis window; "
     "where a tubular bed runs away: its peak temperature's sensitivity to the field, the "
     "critical value and the design's margin to it; for screening and study, designs to be "
     "confirmed by licensed engineers",
     rxtrain::cli::setup_stability},
    {"fit",
     "Fit the case's rate law to lab runs (CSV): estimates, standard errors, 95 % intervals, "
     "correlations and residuals; writes the fitted case",
     rxtrain::cli::setup_fit},
};

// Options shown with a word of their own in --help instead of the library's
// TEXT: paths (FILE, DIR) and temperature differences. An entry whose
// option a command does not have is skipped.
struct TypeWord {
  const char* option;
  const char* kind;
};
constexpr TypeWord kTypeWords[] = {
    {"--limit-margin", "KELVIN"},
    {"--ignition-margin", "KELVIN"},
    {"--runaway-margin", "KELVIN"},
    {"--margin", "KELVIN"},
    {"--approach-window", "KELVIN"},
    {"--return-to", "inlet|max-rate"},
    {"case", "FILE"},
    {"out", "FILE"},
    {"shards", "FILE"},
    {"--json", "FILE"},
    {"--write-case", "FILE"},
    {"--data", "FILE"},
    {"--into", "FILE"},
    {"--sample-fit", "FILE"},
    {"--report", "DIR"},
};

// --help without the option library's internals: a plain type word
// (NUMBER, INTEGER, TEXT, FILE, DIR), the choices of an enumeration
// ("inlet|max-rate") and a validated range ("in [1e-14, 0.001]").
class HelpFormatter : public CLI::Formatter {
 public:
  std::string make_option_opts(const CLI::Option* opt) const override {
    if (!opt->get_option_text().empty()) return " " + opt->get_option_text();
    std::string out;
    if (opt->get_type_size() != 0) {
      out += " " + type_text(opt->get_type_name());
      if (!opt->get_default_str().empty()) out += "=" + opt->get_default_str();
      if (opt->get_expected_max() == CLI::detail::expected_max_vector_size) out += " ...";
      if (opt->get_required()) out += " REQUIRED";
    }
    if (!opt->get_excludes().empty()) {
      out += " (not with";
      for (const CLI::Option* o : opt->get_excludes()) out += " " + o->get_name();
      out += ")";
    }
    return out;
  }

 private:
  // "FLOAT:FLOAT in [1e-14 - 0.001]" -> "NUMBER in [1e-14, 0.001]";
  // "ENUM:value in {inlet->0,max-rate->1} OR {0,1}" -> "inlet|max-rate".
  static std::string type_text(const std::string& raw) {
    const auto colon = raw.find(':');
    const std::string base = raw.substr(0, colon);
    const std::string rest = colon == std::string::npos ? "" : raw.substr(colon + 1);
    if (base == "ENUM") {
      const auto a = rest.find('{'), b = rest.find('}');
      if (a == std::string::npos || b == std::string::npos) return "CHOICE";
      std::string names, item;
      for (char ch : rest.substr(a + 1, b - a - 1) + ",") {
        if (ch != ',') {
          item += ch;
          continue;
        }
        const std::string name = item.substr(0, item.find("->"));
        if (!name.empty()) names += (names.empty() ? "" : "|") + name;
        item.clear();
      }
      return names;
    }
    std::string word = base == "FLOAT"                     ? "NUMBER"
                       : (base == "INT" || base == "UINT") ? "INTEGER"
                                                           : base;
    const auto in = rest.find(" in [");
    if (in != std::string::npos) {
      std::string range = rest.substr(in + 4);  // "[a - b]..." (validators may follow)
      range = range.substr(0, range.find(']') + 1);
      const auto dash = range.find(" - ");
      if (dash != std::string::npos) range.replace(dash, 3, ", ");
      // A range whose ends are refused too (a check named "open
      // interval") is shown open.
      if (rest.find("open interval") != std::string::npos) {
        range.front() = '(';
        range.back() = ')';
      }
      word += " in " + range;
    }
    return word;
  }
};

// The first word that names no command: "unknown command 'foo'", and the
// commands there are.
bool unknown_command(int argc, char** argv) {
  if (argc < 2 || argv[1][0] == '-') return false;
  const std::string word = argv[1];
  std::string names;
  for (const auto& c : kCommands) {
    if (word == c.name) return false;
    names += (names.empty() ? "" : ", ") + std::string(c.name);
  }
  std::fprintf(stderr,
               "rxtrain: error: unknown command '%s'; the commands are %s (rxtrain --help says "
               "what each does)\n",
               word.c_str(), names.c_str());
  return true;
}

}  // namespace

int main(int argc, char** argv) {
  namespace cli = rxtrain::cli;
  CLI::App app{fmt::format(
      "rxtrain {}: adiabatic catalytic reactor trains (PFR and CSTR stages, intercoolers).\n\n"
      "CAUTION: {}\n\n"
      "Exit codes: 0 success, 2 input error, 3 solver failure or infeasible target, "
      "4 output not written.",
      RXTRAIN_VERSION, rxtrain::kCaution)};
  app.set_version_flag("--version", std::string("rxtrain ") + RXTRAIN_VERSION);
  app.formatter(std::make_shared<HelpFormatter>());
  app.require_subcommand(1);
  std::vector<std::pair<CLI::App*, cli::Action>> actions;
  for (const auto& c : kCommands) {
    CLI::App* sub = app.add_subcommand(c.name, c.help);
    actions.emplace_back(sub, c.setup(*sub));
    for (const auto& p : kTypeWords)
      if (CLI::Option* o = sub->get_option_no_throw(p.option)) o->type_name(p.kind);
    // run --csv writes a folder, sweep --csv a file.
    if (CLI::Option* o = sub->get_option_no_throw("--csv"))
      o->type_name(o->get_description().find("folder") != std::string::npos ? "DIR" : "FILE");
  }
  if (unknown_command(argc, argv)) return cli::kExitInput;
  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    app.exit(e);
    return cli::kExitInput;
  }
  try {
    for (auto& [sub, action] : actions)
      if (sub->parsed()) return action();
  } catch (const rxtrain::InputError& e) {
    std::fprintf(stderr, "%s\n", e.what());
    return cli::kExitInput;
  } catch (const rxtrain::InfeasibleError& e) {
    std::fprintf(stderr, "%s\n", e.what());
    return cli::kExitSolver;
  } catch (const rxtrain::SolverError& e) {
    std::fprintf(stderr, "rxtrain: error: %s\n", e.what());
    return cli::kExitSolver;
  } catch (const rxtrain::OutputError& e) {
    std::fprintf(stderr, "rxtrain: error: %s\n", e.what());
    return cli::kExitOutput;
  } catch (const rxtrain::UnitError& e) {
    std::fprintf(stderr, "rxtrain: error: %s\n", e.what());
    return cli::kExitInput;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "rxtrain: internal error: %s\n", e.what());
    return 70;
  }
  return 0;
}
