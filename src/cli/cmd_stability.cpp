// rxtrain stability CASE --param PATH=A:B [--stage ID] [--points N] [--json FILE] [--csv FILE]
//   [--report DIR]
#include <fmt/format.h>

#include <cstdio>
#include <memory>
#include <string>
#include <vector>

#include "commands.hpp"
#include "rxtrain/analysis/stability.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/stability_report.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/study.hpp"

namespace rxtrain::cli {

namespace {

struct StabilityCommandOptions {
  std::string case_file;
  std::string param;
  std::string stage;
  std::string json_path;
  std::string csv_path;
  std::string report_dir;
  int points = SensitivityOptions{}.points;
};

int run_stability_command(const StabilityCommandOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  const std::string option = "--param";
  const auto eq = o.param.find('=');
  const auto colon = o.param.find(':', eq == std::string::npos ? 0 : eq);
  if (eq == std::string::npos || colon == std::string::npos ||
      o.param.find(':', colon + 1) != std::string::npos)
    throw InputError({option, 0, 0}, fmt::format("\"{}\" is not PATH=FROM:TO (e.g. "
                                                 "feed.T=280K:340K)",
                                                 o.param));
  const sweep::CasePathTable table(c);
  const std::size_t i = table.find(o.param.substr(0, eq), option);
  const CaseField& field = table.at(i);
  if (o.points < 3 || o.points > 100000)
    throw InputError({"--points", 0, 0},
                     fmt::format("expected a number of points from 3 to 100000, got {}", o.points));
  StabilityOptions options;
  options.stage = o.stage;
  options.sensitivity.points = o.points;
  options.lo = sweep::path_value(o.param.substr(eq + 1, colon - eq - 1), field, units, option);
  options.hi = sweep::path_value(o.param.substr(colon + 1), field, units, option);
  if (!(options.lo < options.hi))
    throw InputError({option, 0, 0}, fmt::format("in \"{}\": FROM must be below TO", o.param));
  for (double v : {options.lo, options.hi})
    if (!field.contains(v))
      throw InputError({option, 0, 0},
                       fmt::format("in \"{}\": {} = {:g} (SI) is out of range: it must be {}",
                                   o.param, field.name, v, field.domain_text()));
  const StabilityResult r = run_stability(c, field, options);
  // Rendered before anything is written; a failure leaves no file behind.
  OutputSet out;
  out.protect(o.case_file);
  if (!o.json_path.empty()) out.add(o.json_path, stability_json_text(r));
  if (!o.csv_path.empty()) out.add(o.csv_path, stability_csv_text(r));
  if (!o.report_dir.empty()) {
    const std::vector<Figure> figures = stability_figures(r);
    add_report_files(
        out, o.report_dir,
        stability_report_html(c, r, figures, provenance_of(o.case_file, RXTRAIN_VERSION)), figures);
  }
  out.commit();
  std::fputs(stability_text(c.title, r).c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_stability(CLI::App& app) {
  auto o = std::make_shared<StabilityCommandOptions>();
  app.footer(
      "Results are for screening and study; a design must be confirmed by licensed engineers "
      "under the codes that apply where it will be built.");
  app.add_option("case", o->case_file, "Case file (YAML)")->required();
  app.add_option("--param", o->param,
                 "The case field to vary and its range, PATH=FROM:TO with units (e.g. "
                 "feed.T=280K:340K, train.R1.volume=0.5m3:4m3; the paths of sweep --vary)")
      ->required();
  app.add_option("--stage", o->stage,
                 "The reactor: a stirred tank to follow, or a tubular bed whose runaway margin "
                 "to find (default: the first cstr, else the first pfr)");
  app.add_option("--points", o->points,
                 "A tubular bed: points of the sensitivity scan over FROM:TO, ends included")
      ->capture_default_str();
  app.add_option("--json", o->json_path,
                 "Write the branches and turning points (a bed: the sensitivity and the "
                 "critical value) as JSON (SI) to FILE");
  app.add_option("--csv", o->csv_path,
                 "Write every point of every branch (a bed: of the scan) as CSV (SI) to FILE");
  app.add_option("--report", o->report_dir,
                 "Write report.html (a tank: the S-shaped curve, stable branches solid and "
                 "unstable dashed, the turning points, and the heat-generation and heat-removal "
                 "curves at the case's values; a bed: S and the peak temperature against the "
                 "field, the critical value and the case's marked) and each figure as SVG into "
                 "folder DIR");
  return [o] { return run_stability_command(*o); };
}

}  // namespace rxtrain::cli
