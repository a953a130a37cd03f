// rxtrain command line: parses, dispatches to one subcommand, and maps the
// exceptions of the core to exit codes. Nothing else catches them.
#include <fmt/format.h>

#include <CLI/CLI.hpp>
#include <cstdio>
#include <exception>
#include <string>
#include <vector>

#include "commands.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/units.hpp"

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
};

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
  app.require_subcommand(1);
  std::vector<std::pair<CLI::App*, cli::Action>> actions;
  for (const auto& c : kCommands) {
    CLI::App* sub = app.add_subcommand(c.name, c.help);
    actions.emplace_back(sub, c.setup(*sub));
  }
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
