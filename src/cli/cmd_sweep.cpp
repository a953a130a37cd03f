// rxtrain sweep CASE (--vary PATH=START:STOP:N ... | --sample PATH=DIST ... --runs N)
//   [--output COLS] [--csv PATH] [--json PATH] [--report DIR] [--jobs N] [--shard K/N]
#include <fmt/format.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <iterator>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "commands.hpp"
#include "limit_margin.hpp"
#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/html_page.hpp"
#include "rxtrain/report/sha256.hpp"
#include "rxtrain/report/sweep_report.hpp"
#include "rxtrain/report/sweep_text.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/sweep/study.hpp"
#include "rxtrain/sweep/study_identity.hpp"
#include "rxtrain/sweep/summary.hpp"
#include "rxtrain/sweep/sweep.hpp"
#include "rxtrain/sweep/sweep_csv.hpp"

namespace rxtrain::cli {

namespace {

using namespace rxtrain::sweep;

struct SweepCommandOptions {
  std::string case_file;
  std::vector<std::string> vary;
  std::vector<std::string> sample;
  std::string sample_fit;
  std::size_t runs = 0;
  std::uint64_t seed = 1;
  bool seed_given = false;
  std::string output;
  std::string csv_path;
  std::string json_path;
  std::string report_dir;
  std::size_t jobs = 0;
  std::string shard = "1/1";
  double rtol = CvodeOptions{}.rtol;
  std::string limit_margin;
};

// "42 s", "3 min 20 s", "2 h 05 min".
std::string duration(double seconds) {
  const auto s = static_cast<long long>(std::llround(seconds));
  if (s < 60) return fmt::format("{} s", s);
  if (s < 3600) return fmt::format("{} min {:02} s", s / 60, s % 60);
  return fmt::format("{} h {:02} min", s / 3600, (s % 3600) / 60);
}

// Progress on stderr: a bar redrawn in place on a terminal, otherwise a
// plain line every few seconds (logs of batch jobs stay readable).
class Progress {
 public:
  Progress() : tty_(isatty(STDERR_FILENO) == 1), start_(Clock::now()), last_(start_) {}

  void operator()(std::size_t done, std::size_t total) {
    const auto now = Clock::now();
    const double elapsed = std::chrono::duration<double>(now - start_).count();
    const bool finished = done == total;
    if (!tty_ && !finished && now - last_ < std::chrono::seconds(5)) return;
    if (!tty_ && finished && !printed_) return;  // a short study needs no line
    last_ = now;
    const double rate = elapsed > 0 ? static_cast<double>(done) / elapsed : 0.0;
    const std::string left = rate > 0 ? duration(static_cast<double>(total - done) / rate) + " left"
                                      : std::string("time left unknown");
    if (tty_) {
      constexpr int kWidth = 30;
      const int filled = total ? static_cast<int>(kWidth * done / total) : kWidth;
      std::fprintf(stderr, "\r[%s%s] %zu/%zu runs, %.1f runs/s, %s   ",
                   std::string(static_cast<std::size_t>(filled), '#').c_str(),
                   std::string(static_cast<std::size_t>(kWidth - filled), ' ').c_str(), done, total,
                   rate, finished ? "done" : left.c_str());
      if (finished) std::fputc('\n', stderr);
    } else {
      std::fprintf(stderr, "sweep: %zu/%zu runs, %.1f runs/s, %s\n", done, total, rate,
                   finished ? "done" : left.c_str());
    }
    std::fflush(stderr);
    printed_ = true;
  }

 private:
  using Clock = std::chrono::steady_clock;
  bool tty_;
  Clock::time_point start_, last_;
  bool printed_ = false;
};

// The study's options as the user wrote them, units and all.
std::vector<std::string> as_given(const SweepCommandOptions& o) {
  std::vector<std::string> out;
  for (const auto& v : o.vary) out.push_back("--vary " + v);
  for (const auto& v : o.sample) out.push_back("--sample " + v);
  if (!o.sample_fit.empty()) out.push_back("--sample-fit " + o.sample_fit);
  if (!o.sample.empty() || !o.sample_fit.empty())
    out.push_back(fmt::format("--runs {} --seed {}", o.runs, o.seed));
  return out;
}

int run_sweep_command(const SweepCommandOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  const Shard shard = Shard::parse(o.shard);
  const CasePathTable table(c);
  std::optional<FittedDraws> fitted;
  if (!o.sample_fit.empty()) {
    std::ifstream in(o.sample_fit, std::ios::binary);
    if (!in)
      throw InputError({o.sample_fit, 0, 0}, fmt::format("cannot read \"{}\"", o.sample_fit));
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    fitted = read_fitted_draws(text, o.sample_fit, table, c);
  }
  Study study = parse_study(o.vary, o.sample, o.runs, o.seed, table, units, std::move(fitted));
  if (o.seed_given && !study.monte_carlo())
    throw InputError({"--seed", 0, 0}, "--seed applies to --sample (Monte Carlo) only");
  const OutputSpec outputs =
      o.output.empty() ? OutputSpec::defaults(c) : OutputSpec::parse(o.output, c);

  SweepOptions options;
  options.jobs = o.jobs;
  options.shard = shard;
  options.train.solvers.tube.cvode.rtol = o.rtol;
  options.train.limit_check.margin = parse_limit_margin(o.limit_margin, units);
  options.progress = Progress();
  // Runs solved in batches share their steps: the batches are part of the study.
  if (batched_study(c, table, outputs, options)) study.chain = kBatchRuns;

  std::ifstream in(o.case_file, std::ios::binary);
  const std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  const StudyIdentity identity =
      study_identity(c, sha256_hex(bytes), study, table, outputs, options.train);
  const StudyHeader& header = identity.header;
  const ColumnUnits col_units{identity.input_units, identity.output_units};

  const std::vector<RunRow> rows = run_sweep(c, table, study, outputs, options);
  const auto inputs = study.input_names();
  StudySummary summary = summarize_study(outputs.names(), header.margin, rows);
  for (std::size_t k = 0; k < summary.percentiles.size(); ++k)
    summary.percentiles[k].unit = col_units.outputs[k];

  // Every output is rendered before any is written (all or nothing).
  OutputSet out;
  out.protect(o.case_file);
  if (!o.csv_path.empty()) out.add(o.csv_path, sweep_csv(header, shard, inputs, rows));
  if (!o.json_path.empty())
    out.add(o.json_path, sweep_json_text(header, shard, inputs, rows, summary));
  if (!o.report_dir.empty()) {
    const auto figures = sweep_figures(study, outputs.names(), col_units, rows);
    add_report_files(out, o.report_dir,
                     sweep_report_html(c.title, o.case_file, as_given(o), header, shard, summary,
                                       study.monte_carlo(), figures),
                     figures);
  }
  out.commit();

  std::string text = fmt::format("{}\nStudy of {} ({}), shard {}\n", c.title, o.case_file,
                                 study.monte_carlo() ? "Monte Carlo" : "grid", shard.to_string());
  text += sweep_text(inputs, outputs.names(), col_units, rows, summary, study.monte_carlo());
  text += fmt::format("\nCAUTION: {}\n", kCaution);
  std::fputs(text.c_str(), stdout);
  const bool all_failed =
      !rows.empty() && std::none_of(rows.begin(), rows.end(),
                                    [](const RunRow& r) { return has_outputs(r.result.status); });
  if (all_failed) {
    std::fprintf(stderr,
                 "rxtrain: error: every run of the study failed (see the rows' messages)\n");
    return kExitSolver;
  }
  return 0;
}

}  // namespace

Action setup_sweep(CLI::App& app) {
  auto o = std::make_shared<SweepCommandOptions>();
  app.add_option("case", o->case_file, "Case file (YAML)")->required();
  app.add_option("--vary", o->vary,
                 "PATH=START:STOP:N: N evenly spaced values of a case field, with units "
                 "(feed.T=120degC:200degC:41); PATH=log:START:STOP:N for log spacing; repeat for "
                 "a full grid (the last given varies fastest)")
      ->take_all();
  app.add_option("--sample", o->sample,
                 "PATH=normal(MEAN,SD) | uniform(LO,HI) | lognormal(MEDIAN,SIGMA): Monte Carlo "
                 "over uncertain inputs (with --runs); SIGMA is the SD of ln X; repeatable")
      ->take_all();
  app.add_option("--sample-fit", o->sample_fit,
                 "Monte Carlo over a fit's parameters: draw them from the multivariate normal "
                 "of the estimate and covariance in FIT.json (`rxtrain fit --json`; log-scale "
                 "ones lognormal), with --runs; may join --sample");
  app.add_option("--runs", o->runs, "Monte Carlo: number of runs");
  CLI::Option* seed = app.add_option("--seed", o->seed, "Monte Carlo: seed of the generator")
                          ->capture_default_str();
  app.add_option("--output", o->output,
                 "Columns, comma-separated: X, T_out, STAGE.FIELD (e.g. R1.T_max, R2.volume, "
                 "E1.outlet.T); default: X, T_out, every reactor's T_max, every stage's outlet.T, "
                 "every sized stage's volume and catalyst_mass");
  app.add_option("--csv", o->csv_path, "Write one row per run (SI) to FILE");
  app.add_option("--json", o->json_path,
                 "Write the rows, percentiles and design margin (SI) to FILE");
  app.add_option("--report", o->report_dir,
                 "Write report.html and SVG plots (outputs against the varied input, or "
                 "histograms) into folder DIR");
  app.add_option("--jobs", o->jobs, "Worker threads (0: every core)")->capture_default_str();
  app.add_option("--shard", o->shard,
                 "K/N: run only the K-th of N contiguous slices of the runs (merge the CSVs "
                 "with rxtrain merge)")
      ->capture_default_str();
  app.add_option("--rtol", o->rtol, "Relative tolerance of the ODE integrator")
      ->check(CLI::Range(1e-14, 1e-3))
      ->capture_default_str();
  add_limit_margin_option(app, o->limit_margin);
  return [o, seed] {
    o->seed_given = seed->count() > 0;
    return run_sweep_command(*o);
  };
}

}  // namespace rxtrain::cli
