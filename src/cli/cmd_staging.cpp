// rxtrain staging CASE [--approach F] [--return-to inlet|max-rate]
//                      [--min-return F] [--max-beds N] [--limit-margin DT] [--json PATH]
//                      [--report DIR]
//                      [--options [--quench-T T] [--tubes COUNTxDIAMETER] [--U U]]
#include <fmt/format.h>

#include <cctype>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <memory>
#include <string>

#include "commands.hpp"
#include "limit_margin.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/cooling_options_report.hpp"
#include "rxtrain/report/staging_html.hpp"
#include "rxtrain/report/staging_report.hpp"
#include "rxtrain/studies/cooling_options.hpp"
#include "rxtrain/studies/staging.hpp"

namespace rxtrain::cli {

namespace {

struct StagingCommandOptions {
  std::string case_file;
  std::string json_path;
  std::string report_dir;
  StagingOptions staging;
  std::string limit_margin;
  // --options: the cooling options side by side.
  bool options = false;
  std::string quench_T, tubes, U;
};

// A value of an option in SI, or a located error naming the option.
double option_si(const UnitParser& units, const char* option, const std::string& text,
                 const SiUnit& unit) {
  const SourceLocation where{option, 0, 0};
  double v = 0;
  try {
    v = units.to_si(text, unit);
  } catch (const UnitError& e) {
    throw InputError(where, fmt::format("\"{}\": {}", text, e.what()));
  }
  if (!(v > 0) || !std::isfinite(v))
    throw InputError(where, fmt::format("expected a positive value, got \"{}\"", text));
  return v;
}

// "2400x38mm" or "2400 x 38 mm": the count, then the inside diameter.
TubeBundleSpec parse_tubes(const UnitParser& units, const std::string& text) {
  const SourceLocation where{"--tubes", 0, 0};
  const auto x = text.find_first_of("xX");
  int count = 0;
  std::size_t used = 0;
  try {
    count = x == std::string::npos ? 0 : std::stoi(text.substr(0, x), &used);
  } catch (const std::exception&) {
    count = 0;
  }
  const bool digits_only = x != std::string::npos &&
                           text.substr(0, x).find_first_not_of(" 0123456789") == std::string::npos;
  if (count <= 0 || !digits_only)
    throw InputError(where,
                     fmt::format("expected COUNTxDIAMETER, e.g. 2400x38mm, got \"{}\"", text));
  TubeBundleSpec t;
  t.count = count;
  t.diameter = option_si(units, "--tubes", text.substr(x + 1), SiUnit::of("m", "a length"));
  return t;
}

int run_options_command(const StagingCommandOptions& o, const Case& c, const UnitParser& units) {
  // The options compare at bed 1's inlet temperature (the quench shots
  // return the stream there too); another return would be ignored, so it
  // is refused.
  if (o.staging.return_to != ReturnTo::Inlet)
    throw InputError({"--return-to", 0, 0},
                     "--options compares the layouts with every exchanger and cold shot "
                     "returning the stream to bed 1's inlet temperature: drop --return-to "
                     "max-rate (or run staging without --options)");
  CoolingOptionsOptions co;
  co.staging = o.staging;
  co.staging.limit_check.margin = parse_limit_margin(o.limit_margin, units);
  co.staging.equilibrium_views = !o.report_dir.empty();  // the diagram's equilibrium curve
  if (!o.quench_T.empty())
    co.quench_T = option_si(units, "--quench-T", o.quench_T, SiUnit::of("K", "a temperature"));
  if (!o.tubes.empty()) co.tubes = parse_tubes(units, o.tubes);
  if (!o.U.empty())
    co.tubes.U =
        option_si(units, "--U", o.U, SiUnit::of("W/(m2*K)", "a heat transfer coefficient"));
  const CoolingOptionsResult result = run_cooling_options(c, co);
  OutputSet out;
  out.protect(o.case_file);
  if (!o.json_path.empty()) out.add(o.json_path, cooling_options_json_text(result));
  if (!o.report_dir.empty()) {
    const auto figures = cooling_options_figures(c, result);
    add_report_files(
        out, o.report_dir,
        cooling_options_html(c, result, figures, provenance_of(o.case_file, RXTRAIN_VERSION)),
        figures);
  }
  out.commit();
  std::fputs(format_cooling_options(result).c_str(), stdout);
  return 0;
}

int run_staging_command(const StagingCommandOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  if (o.options) return run_options_command(o, c, units);
  if (!o.quench_T.empty() || !o.tubes.empty() || !o.U.empty())
    throw InputError({!o.quench_T.empty() ? "--quench-T"
                      : !o.tubes.empty()  ? "--tubes"
                                          : "--U",
                      0, 0},
                     "--quench-T, --tubes and --U go with --options (the cooling options side "
                     "by side)");
  StagingOptions so = o.staging;
  so.limit_check.margin = parse_limit_margin(o.limit_margin, units);
  so.equilibrium_views = !o.report_dir.empty();  // the figures draw them
  const StagingResult result = run_staging(c, so);
  // Rendered before anything is written; a failure leaves no file behind.
  OutputSet out;
  out.protect(o.case_file);  // the case file is never an output
  if (!o.json_path.empty()) out.add(o.json_path, staging_json_text(result));
  if (!o.report_dir.empty()) {
    const auto figures = staging_figures(c, result);
    add_report_files(
        out, o.report_dir,
        staging_report_html(c, result, figures, provenance_of(o.case_file, RXTRAIN_VERSION)),
        figures);
  }
  out.commit();
  std::fputs(format_staging_report(result).c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_staging(CLI::App& app) {
  auto o = std::make_shared<StagingCommandOptions>();
  app.add_option("case", o->case_file, "Case file (YAML) with a top-level target: {conversion: X}")
      ->required();
  app.add_option("--approach", o->staging.approach,
                 "Each bed ends this fraction of the way from its inlet conversion to its "
                 "adiabatic equilibrium conversion (0 < F < 1)")
      ->check(CLI::Range(0.0, 1.0) & CLI::Validator(
                                         [](const std::string& s) -> std::string {
                                           const double v = std::stod(s);
                                           return v > 0 && v < 1 ? ""
                                                                 : "must lie strictly "
                                                                   "between 0 and 1";
                                         },
                                         "open interval", ""))
      ->capture_default_str();
  // "optimal" is the value's old name, kept for a release: it read as
  // `optimize`'s optimum, which this greedy policy is not.
  app.add_option_function<std::string>(
         "--return-to",
         [o](const std::string& v) {
           std::string s = v;
           for (auto& ch : s) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
           if (s == "optimal") {
             std::fputs(
                 "note: --return-to optimal was renamed --return-to max-rate (the greedy "
                 "maximum-rate policy; `rxtrain optimize` finds the least-catalyst layout)\n",
                 stderr);
             s = "max-rate";
           }
           o->staging.return_to = s == "inlet" ? ReturnTo::Inlet : ReturnTo::MaxRate;
         },
         "Temperature the exchangers between beds return the stream to: inlet (bed 1's "
         "inlet temperature) or max-rate (the maximum-rate temperature at that conversion, "
         "within the case's limits, with the --min-return floor)")
      ->check(CLI::Validator(
          [](const std::string& v) -> std::string {
            std::string s = v;
            for (auto& ch : s) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
            return s == "inlet" || s == "max-rate" || s == "optimal"
                       ? ""
                       : "must be inlet or max-rate, got '" + v + "'";
          },
          "inlet|max-rate", ""))
      ->default_str("inlet");
  app.add_option("--min-return", o->staging.min_return,
                 "With --return-to max-rate: the least fraction of a bed's temperature rise "
                 "(fall, endothermic) the exchanger after it takes back; where the return to "
                 "the maximum-rate temperature would take less, the bed runs on (common "
                 "practice, no source)")
      ->check(CLI::Range(0.0, 1.0) & CLI::Validator(
                                         [](const std::string& s) -> std::string {
                                           return std::stod(s) < 1 ? "" : "must be below 1";
                                         },
                                         "", "below one"))
      ->capture_default_str();
  app.add_option("--max-beds", o->staging.max_beds,
                 "Most beds tried before the target is called out of reach")
      ->check(CLI::Range(1, 100))
      ->capture_default_str();
  add_limit_margin_option(app, o->limit_margin);
  app.add_flag("--options", o->options,
               "Compare the cooling options side by side, each with the least catalyst: "
               "intercooled adiabatic beds, cold-shot quench with fresh feed (--quench-T) and one "
               "cooled multitubular reactor (the case's tubes and U, or --tubes and --U)");
  app.add_option("--quench-T", o->quench_T,
                 "With --options: the temperature of the fresh feed available for cold shots "
                 "(before its preheater), e.g. 180degC; without it the quench option is skipped");
  app.add_option("--tubes", o->tubes,
                 "With --options: the cooled reactor's tubes as COUNTxDIAMETER (inside), e.g. "
                 "2400x38mm; default: the case's first reactor's tubes");
  app.add_option("--U", o->U,
                 "With --options: the cooled reactor's overall wall coefficient, e.g. "
                 "220W/m2/K; default: the case's first reactor's");
  app.add_option("--json", o->json_path, "Write the answer as JSON (SI units) to FILE");
  app.add_option("--report", o->report_dir,
                 "Write report.html (self-contained, with the staged beds on the "
                 "temperature-conversion diagram) and the figures as SVG into folder DIR");
  return [o] { return run_staging_command(*o); };
}

}  // namespace rxtrain::cli
