// Wall time per run of each case: `rxtrain_bench [CASE...]` (default: every
// cases/*.yaml). A plain timed loop: each case is run repeatedly for at
// least `--seconds` (default 1 s) and the median of ten batches is reported
// with the solver's work counts of one run.
#include <fmt/format.h>

#include <algorithm>
#include <chrono>
#include <filesystem>
#include <string>
#include <vector>

#include "rxtrain/case.hpp"
#include "rxtrain/train.hpp"
#include "rxtrain/units.hpp"

namespace {

using Clock = std::chrono::steady_clock;

double seconds_since(Clock::time_point t0) {
  return std::chrono::duration<double>(Clock::now() - t0).count();
}

// Median over ten batches, each calibrated to about budget/10 seconds.
double median_seconds_per_run(const rxtrain::Case& c, const rxtrain::TrainOptions& o,
                              double budget) {
  long batch = 1;
  for (;;) {
    const auto t0 = Clock::now();
    for (long k = 0; k < batch; ++k) rxtrain::run_train(c, o);
    if (seconds_since(t0) > budget / 10 || batch > (1L << 24)) break;
    batch *= 2;
  }
  std::vector<double> per_run;
  for (int b = 0; b < 10; ++b) {
    const auto t0 = Clock::now();
    for (long k = 0; k < batch; ++k) rxtrain::run_train(c, o);
    per_run.push_back(seconds_since(t0) / static_cast<double>(batch));
  }
  std::nth_element(per_run.begin(), per_run.begin() + 5, per_run.end());
  return per_run[5];
}

}  // namespace

int main(int argc, char** argv) {
  using namespace rxtrain;
  std::vector<std::string> files;
  double budget = 1.0;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--seconds" && i + 1 < argc) {
      budget = std::stod(argv[++i]);
    } else {
      files.push_back(a);
    }
  }
  if (files.empty()) {
    const std::filesystem::path dir = std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases";
    for (const auto& e : std::filesystem::directory_iterator(dir))
      if (e.path().extension() == ".yaml") files.push_back(e.path().string());
    std::sort(files.begin(), files.end());
  }
  const UnitParser units;
  fmt::print("{:<36} {:>12} {:>14} {:>7} {:>7} {:>7} {:>7}\n", "case", "core/run",
             "with views/run", "stages", "steps", "rhs", "jac");
  for (const auto& f : files) {
    try {
      const Case c = load_case(f, units);
      // "core": the train alone; "with views": plus equilibrium records,
      // the equilibrium curve, the maximum-rate locus and Levenspiel data,
      // as `rxtrain run` computes them.
      TrainOptions core;
      core.equilibrium_views = false;
      TrainResult first = run_train(c, core);
      long steps = 0, rhs = 0, jac = 0;
      for (const auto& s : first.stages) {
        steps += s.stats.steps;
        rhs += s.stats.rhs_evals;
        jac += s.stats.jac_evals;
      }
      const double t_core = median_seconds_per_run(c, core, budget);
      const double t_views = median_seconds_per_run(c, TrainOptions{}, budget);
      fmt::print("{:<36} {:>9.3f} ms {:>11.3f} ms {:>7} {:>7} {:>7} {:>7}\n",
                 std::filesystem::path(f).filename().string(), t_core * 1e3, t_views * 1e3,
                 first.stages.size(), steps, rhs, jac);
    } catch (const std::exception& e) {
      fmt::print("{:<36} failed: {}\n", std::filesystem::path(f).filename().string(), e.what());
    }
  }
  return 0;
}
