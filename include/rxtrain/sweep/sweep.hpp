// Runs a study: every run of the shard, each on a working copy of the
// case edited by a CaseEditor (the case is never parsed or validated
// again), in parallel, rows in run order.
//
// Stirred tanks are warm-started along the study's fixed chains of
// consecutive runs (study.hpp): inside a chain each run's tanks get the
// previous run's steady states as first Newton starts (TrainOptions::
// warm_starts), then their cold starts. Newton's converged answer depends
// on its start in the last digits, so a run must always see the same
// predecessor: a thread takes whole chains, each chain's first run starts
// cold, a failed run passes nothing on, and a shard that begins inside a
// chain first recomputes that chain's earlier runs (without writing them).
// The rows are then the same for any number of jobs and any sharding.
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
