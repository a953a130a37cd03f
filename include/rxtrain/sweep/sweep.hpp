// Runs a study: every run of the shard, each on a working copy of the
// case edited by a CaseEditor (the case is never parsed or validated
// again), in parallel, rows in run order. The rows are the same for any
// number of jobs: each run depends only on its own inputs.
//
// Stirred tanks are not warm-started from the neighbouring point: Newton's
// converged answer depends on its start in the last digits, so a guess
// from whichever run a thread or shard did before would make rows differ
// between --jobs and --shard settings (CstrOptions has no guess field
// either). Every point starts from the stage's own starts.
#pragma once

#include <chrono>
#include <cstddef>
#include <functional>
#include <vector>

#include "rxtrain/sweep/run_point.hpp"
#include "rxtrain/sweep/study.hpp"

namespace rxtrain::sweep {

struct RunRow {
  std::size_t run = 0;
  std::vector<double> inputs;  // SI, Study::input_names() order
  PointResult result;
};

struct SweepOptions {
  // Worker threads; 0 = every hardware thread.
  std::size_t jobs = 0;
  Shard shard;
  // Train options of every run; equilibrium views are switched on only
  // when an output column needs them.
  TrainOptions train;
  // Called on the calling thread with the runs done so far of this shard.
  std::function<void(std::size_t done, std::size_t total)> progress;
  std::chrono::milliseconds progress_period{200};
};

std::vector<RunRow> run_sweep(const Case& base, const CasePathTable& table, const Study& study,
                              const OutputSpec& outputs, const SweepOptions& options);

}  // namespace rxtrain::sweep
