// rxtrain optimize CASE [--beds N | --max-beds N] [--fixed-feed-T] [--margin 15K]
//                       [--limit-margin DT] [--json PATH] [--write-case PATH] [--report DIR]
#include <fmt/format.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>

#include "commands.hpp"
#include "limit_margin.hpp"
#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/report/optimize_html.hpp"
#include "rxtrain/report/optimize_output.hpp"
#include "rxtrain/report/optimize_text.hpp"
#include "rxtrain/report/text_format.hpp"
#include "rxtrain/studies/optimize.hpp"
#include "rxtrain/studies/write_case.hpp"

namespace rxtrain::cli {

namespace {

using nlohmann::json;

struct OptimizeCommandOptions {
  std::string case_file;
  std::string json_path;
  std::string case_path;
  std::string report_dir;
  int beds = 0;      // 0: not given
  int max_beds = 0;  // 0: not given
  bool fixed_feed_T = false;
  std::string limit_margin;
  std::string margin;  // a temperature difference, e.g. "15K"; empty: none
};

// A one-line progress report on stderr, redrawn at most ten times a second.
class ProgressLine {
 public:
  explicit ProgressLine(const char* unit) : unit_(unit) {}
  void operator()(const DesignProgress& p) {
    const auto now = std::chrono::steady_clock::now();
    if (now - last_ < std::chrono::milliseconds(100)) return;
    last_ = now;
    const std::string where =
        p.start > 0 ? fmt::format("start {}/{}", p.start, p.starts) : std::string("polish");
    const std::string best = p.best ? fmt::format("{:.6g} {}", *p.best, unit_) : "none yet";
    std::fprintf(stderr, "\r\033[Koptimize: %d beds, %s, %ld evaluations, best %s", p.beds,
                 where.c_str(), p.evaluations, best.c_str());
    std::fflush(stderr);
    shown_ = true;
  }
  void clear() const {
    if (shown_) std::fputs("\r\033[K", stderr);
  }

 private:
  const char* unit_;
  std::chrono::steady_clock::time_point last_{};
  bool shown_ = false;
};

int run_optimize_command(const OptimizeCommandOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  DesignOptions options;
  if (o.beds > 0) options.beds = o.beds;
  if (o.max_beds > 0) options.max_beds = o.max_beds;
  options.fixed_feed_T = o.fixed_feed_T;
  options.equilibrium_views = !o.report_dir.empty();  // the figures draw them
  options.limit_check.margin = parse_limit_margin(o.limit_margin, units);
  if (!o.margin.empty()) {
    try {
      options.margin =
          units.difference_to_si(o.margin, SiUnit::of("K", "a temperature difference"));
    } catch (const UnitError& e) {
      throw UnitError(fmt::format("--margin: {}", e.what()));
    }
    if (!(options.margin >= 0))
      throw UnitError(
          fmt::format("--margin: a margin inside the limits cannot be negative, got "
                      "\"{}\"",
                      o.margin));
  }
  // The objective's unit: kg for per-catalyst rates, else m3.
  bool per_catalyst = false;
  for (const auto& rx : c.mechanism.reactions())
    per_catalyst = per_catalyst || rx.rate.basis == RateBasis::Catalyst;
  auto progress = std::make_shared<ProgressLine>(per_catalyst ? "kg" : "m3");
  if (::isatty(::fileno(stderr)))
    options.progress = [progress](const DesignProgress& p) { (*progress)(p); };
  DesignResult result;
  try {
    result = optimize_design(c, options);
  } catch (...) {
    progress->clear();
    throw;
  }
  progress->clear();

  // Rendered before anything is written; a failure leaves no file behind.
  OutputSet out;
  out.protect(o.case_file);  // the case file is never an output
  if (!o.json_path.empty()) out.add(o.json_path, optimize_json_text(result));
  if (!o.case_path.empty()) {
    std::ifstream in(o.case_file, std::ios::binary);
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    out.add(o.case_path, design_case_text(c, text, result, result.best, units, o.case_path));
  }
  if (!o.report_dir.empty()) {
    const auto figures = optimize_figures(c, result);
    add_report_files(
        out, o.report_dir,
        optimize_report_html(c, result, figures, provenance_of(o.case_file, RXTRAIN_VERSION)),
        figures);
  }
  out.commit();
  std::fputs(optimize_table(result, options).c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_optimize(CLI::App& app) {
  auto o = std::make_shared<OptimizeCommandOptions>();
  app.add_option("case", o->case_file,
                 "Case file (YAML) with a top-level target: {conversion: X} and limits: {T_max: "
                 "..., T_in_min: ...}")
      ->required();
  auto* beds = app.add_option("--beds", o->beds,
                              "Number of adiabatic beds (default: the case's reactor stages)")
                   ->check(CLI::Range(1, 20));
  app.add_option("--max-beds", o->max_beds,
                 "Optimize 1 to N beds, show total catalyst and duty against N, keep the least")
      ->check(CLI::Range(1, 20))
      ->excludes(beds);
  app.add_flag("--fixed-feed-T", o->fixed_feed_T,
               "Keep bed 1's inlet at the feed temperature (no feed conditioning)");
  add_limit_margin_option(app, o->limit_margin);
  app.add_option("--margin", o->margin,
                 "Keep every bed temperature this far inside the catalyst's limits: within "
                 "[T_in_min + margin, T_max - margin] (a temperature difference, e.g. 15K; "
                 "default 0)");
  app.add_option("--json", o->json_path, "Write the optimum as JSON (SI units) to FILE");
  app.add_option("--report", o->report_dir,
                 "Write report.html (self-contained: the optimum over the equilibrium curve, "
                 "profiles, and with --max-beds the beds-against-catalyst trade-off) and the "
                 "figures as SVG into folder DIR");
  app.add_option("--write-case", o->case_path,
                 "Write the case with the optimum's train to FILE (rounded where that keeps its "
                 "target and limits; rxtrain run reproduces it)");
  return [o] { return run_optimize_command(*o); };
}

}  // namespace rxtrain::cli
