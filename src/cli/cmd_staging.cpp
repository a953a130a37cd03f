// rxtrain staging CASE [--approach F] [--return-to inlet|max-rate]
//                      [--min-return F] [--max-beds N] [--limit-margin DT] [--json PATH]
//                      [--report DIR]
#include <cctype>
#include <cstdio>
#include <filesystem>
#include <memory>
#include <string>

#include "commands.hpp"
#include "limit_margin.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/staging_html.hpp"
#include "rxtrain/report/staging_report.hpp"
#include "rxtrain/studies/staging.hpp"

namespace rxtrain::cli {

namespace {

struct StagingCommandOptions {
  std::string case_file;
  std::string json_path;
  std::string report_dir;
  StagingOptions staging;
  std::string limit_margin;
};

int run_staging_command(const StagingCommandOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
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
  app.add_option("--json", o->json_path, "Write the answer as JSON (SI units) to FILE");
  app.add_option("--report", o->report_dir,
                 "Write report.html (self-contained, with the staged beds on the "
                 "temperature-conversion diagram) and the figures as SVG into folder DIR");
  return [o] { return run_staging_command(*o); };
}

}  // namespace rxtrain::cli
