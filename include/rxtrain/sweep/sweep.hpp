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
//
// Batches: when every reactor of the case is a tubular stage that
// run_trains_batched can take (train_batchable) and the study
// has chains (study.chain > 1, set from batched_study() by the caller),
// each chain's runs are solved together, one CVODE system for all of
// them, which shares CVODE's per-step work (docs/performance.md). The
// chain fixes which runs share a batch, so the rows are again the same for
// any --jobs and --shard. A batch that fails as a whole (one run's solver
// failure, an infeasible exchanger) is rerun one run at a time, so each
// failed row keeps its own reason.
#pragma once

#include <chrono>
#include <cstddef>
#include <functional>
#include <stdexcept>
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
  // Asked on the calling thread every progress_period: when it returns
  // true no further run starts, the runs under way finish, and run_sweep
  // throws SweepCancelled (a caller's Ctrl-C).
  std::function<bool()> cancel;
};

// Thrown by run_sweep when options.cancel asked it to stop.
struct SweepCancelled : std::runtime_error {
  SweepCancelled() : std::runtime_error("the sweep was cancelled") {}
};

// Runs per batch, the chain length of a batched study: long enough that
// CVODE's per-step work is small per run, short enough that a sweep of a
// few hundred runs still spreads over the threads.
inline constexpr std::size_t kBatchRuns = 16;

// True when the runs of a study of `base` with these outputs can be solved
// in batches (see above); the caller then sets the study's chain to
// kBatchRuns before writing its definition.
bool batched_study(const Case& base, const CasePathTable& table, const OutputSpec& outputs,
                   const SweepOptions& options);

std::vector<RunRow> run_sweep(const Case& base, const CasePathTable& table, const Study& study,
                              const OutputSpec& outputs, const SweepOptions& options);

}  // namespace rxtrain::sweep
