// rxtrain run CASE [--json PATH] [--csv DIR] [--report DIR] [--rtol R] [--limit-margin DT]
//                 [--approach-window 100K]
#include <fmt/format.h>

#include <cstdio>
#include <filesystem>
#include <memory>
#include <string>

#include "commands.hpp"
#include "limit_margin.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/csv.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/report/table.hpp"
#include "rxtrain/stages/levenspiel.hpp"

namespace rxtrain::cli {

namespace {

struct RunOptions {
  std::string case_file;
  std::string json_path;
  std::string csv_dir;
  std::string report_dir;
  double rtol = CvodeOptions{}.rtol;
  std::string limit_margin;
  std::string approach_window;  // a temperature difference; empty: the default
  // A stirred tank whose ignition or extinction feed temperature lies this
  // close to the case's is told (kDefaultIgnitionMargin).
  std::string ignition_margin = fmt::format("{:g} K", kDefaultIgnitionMargin);
  // A tubular bed whose runaway critical coolant (adiabatic: inlet)
  // temperature lies this close to the case's is told (kDefaultRunawayMargin).
  std::string runaway_margin = fmt::format("{:g} K", kDefaultRunawayMargin);
};

// A margin option's temperature difference, K, not negative.
double margin_option(const UnitParser& units, const std::string& option, const std::string& text) {
  double m = 0;
  try {
    m = units.difference_to_si(text, SiUnit::of("K", "a temperature difference"));
  } catch (const UnitError& e) {
    throw UnitError(option + ": " + std::string(e.what()));
  }
  if (!(m >= 0))
    throw UnitError(option + ": the margin must not be negative, got \"" + text + "\"");
  return m;
}

int run(const RunOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  TrainOptions options;
  // The curves are drawn or written only by the JSON, CSV and report.
  options.view_curves = !o.json_path.empty() || !o.csv_dir.empty() || !o.report_dir.empty();
  options.solvers.tube.cvode.rtol = o.rtol;
  options.limit_check.margin = parse_limit_margin(o.limit_margin, units);
  if (!o.approach_window.empty()) {
    double w = 0;
    try {
      w = units.difference_to_si(o.approach_window, SiUnit::of("K", "a temperature difference"));
    } catch (const UnitError& e) {
      throw UnitError("--approach-window: " + std::string(e.what()));
    }
    if (!(w > 0))
      throw UnitError("--approach-window: the window must be above zero, got \"" +
                      o.approach_window + "\"");
    options.solvers.equilibrium.approach_T_window = w;
  }
  const double flip_margin = margin_option(units, "--ignition-margin", o.ignition_margin);
  const double runaway_margin = margin_option(units, "--runaway-margin", o.runaway_margin);
  // No NaN or Inf may reach an output.
  const TrainResult result = run_checked(c, options, flip_margin, runaway_margin);

  // Every output is rendered before any is written, and all are renamed
  // into place together: a failure leaves no half-written file behind.
  OutputSet out;
  out.protect(o.case_file);  // the case file is never an output
  if (!o.json_path.empty()) out.add(o.json_path, json_text(result));
  if (!o.csv_dir.empty()) {
    out.add(std::filesystem::path(o.csv_dir) / "stages.csv", stages_csv(result));
    out.add(std::filesystem::path(o.csv_dir) / "streams.csv", streams_csv(result));
    out.add(std::filesystem::path(o.csv_dir) / "profiles.csv", profiles_csv(result));
    out.add(std::filesystem::path(o.csv_dir) / "paths.csv", paths_csv(result));
    out.add(std::filesystem::path(o.csv_dir) / "levenspiel.csv", levenspiel_csv(result));
  }
  if (!o.report_dir.empty()) {
    const auto figures = run_figures(c, result, result.levenspiel);
    add_report_files(
        out, o.report_dir,
        run_report_html(c, result, figures, provenance_of(o.case_file, RXTRAIN_VERSION)), figures);
  }
  out.commit();
  std::fputs(format_stage_table(result).c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_run(CLI::App& app) {
  auto o = std::make_shared<RunOptions>();
  app.add_option("case", o->case_file, "Case file (YAML)")->required();
  app.add_option("--json", o->json_path, "Write the whole result as JSON (SI units) to FILE");
  app.add_option("--csv", o->csv_dir,
                 "Write stages.csv, streams.csv, profiles.csv, paths.csv and levenspiel.csv into "
                 "folder DIR");
  app.add_option("--report", o->report_dir,
                 "Write report.html (self-contained, with figures) and the figures as SVG into "
                 "folder DIR");
  app.add_option("--approach-window", o->approach_window,
                 "Show the approach temperature T_eq - T only within this window (a temperature "
                 "difference, default 100K): beyond it K(T) is too flat for the figure to mean "
                 "much, and the cell says why it is empty");
  app.add_option("--rtol", o->rtol, "Relative tolerance of the ODE integrator")
      ->check(CLI::Range(1e-14, 1e-3))
      ->capture_default_str();
  app.add_option("--ignition-margin", o->ignition_margin,
                 "Warn when a stirred tank's ignition or extinction feed temperature lies within "
                 "this of the case's (a temperature difference; 0 K: no check)")
      ->capture_default_str();
  app.add_option("--runaway-margin", o->runaway_margin,
                 "Warn when a tubular bed's runaway critical temperature (where its peak "
                 "temperature's normalized sensitivity peaks) of the coolant, or of the inlet for "
                 "an adiabatic bed, lies within this of the case's (a temperature difference; "
                 "default 5 K: common practice, no source; 0 K: no check)")
      ->capture_default_str();
  add_limit_margin_option(app, o->limit_margin);
  return [o] { return run(*o); };
}

}  // namespace rxtrain::cli
