// rxtrain compare CASE [--json PATH] [--report DIR] [--rtol R] [--limit-margin DT]
#include <fmt/format.h>

#include <cstdio>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "commands.hpp"
#include "limit_margin.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/compare_report.hpp"
#include "rxtrain/studies/compare.hpp"

namespace rxtrain::cli {

namespace {

struct CompareCommandOptions {
  std::string case_file;
  std::string json_path;
  std::string report_dir;
  double rtol = CvodeOptions{}.rtol;
  std::string limit_margin;
};

int run_compare_command(const CompareCommandOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  CompareOptions options;
  options.train.solvers.tube.cvode.rtol = o.rtol;
  options.train.limit_check.margin = parse_limit_margin(o.limit_margin, units);
  const CompareResult result = compare_layouts(c, options);
  // Rendered before anything is written; a failure leaves no file behind.
  OutputSet out;
  out.protect(o.case_file);
  if (!o.json_path.empty()) out.add(o.json_path, compare_json_text(result));
  if (!o.report_dir.empty()) {
    const std::vector<Figure> figures{compare_figure(result)};
    add_report_files(
        out, o.report_dir,
        compare_report_html(c, result, figures, provenance_of(o.case_file, RXTRAIN_VERSION)),
        figures);
  }
  out.commit();
  std::fputs(format_compare_table(result).c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_compare(CLI::App& app) {
  auto o = std::make_shared<CompareCommandOptions>();
  app.add_option("case", o->case_file, "Case file (YAML)")->required();
  app.add_option("--json", o->json_path, "Write every layout, best first, as JSON (SI) to FILE");
  app.add_option("--report", o->report_dir,
                 "Write report.html (self-contained: the layouts table and a bar chart of them) "
                 "and the chart as SVG into folder DIR");
  app.add_option("--rtol", o->rtol, "Relative tolerance of the ODE integrator")
      ->check(CLI::Range(1e-14, 1e-3))
      ->capture_default_str();
  add_limit_margin_option(app, o->limit_margin);
  return [o] { return run_compare_command(*o); };
}

}  // namespace rxtrain::cli
