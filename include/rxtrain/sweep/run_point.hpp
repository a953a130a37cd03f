// One point of a study: run the train of an edited case and read the
// output columns. Every run of a sweep goes through evaluate_point(), so
// a faster way to run a train (reusable solver state in the workspace)
// changes this one function.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/sweep/outputs.hpp"

namespace rxtrain::sweep {

// How a run ended. A failed run is a row with its reason, never dropped.
enum class RunStatus {
  Ok,
  // The run finished (its outputs are its own) but a reactor stage passes
  // the case's limits: a peak above T_max or a lowest point below T_in_min
  // (limit_check.hpp); the message says which, by how much and where.
  OverLimit,
  Infeasible,     // a target out of reach (equilibrium, complete conversion)
  SolverFailure,  // the integrator or Newton failed, or a non-finite result
  InvalidInput,   // a sampled value outside its field's range
};

// "ok", "over_limit", "infeasible", "solver-failure", "invalid-input".
const char* run_status_name(RunStatus s);

// True for the statuses of a run that finished, whose outputs are numbers
// (Ok, OverLimit): the runs percentiles and design margins are taken over.
bool has_outputs(RunStatus s);

struct PointResult {
  std::vector<std::optional<double>> outputs;  // SI; all empty unless has_outputs(status)
  RunStatus status = RunStatus::Ok;
  // A failed run: why. A finished one: what the engineer should know of
  // it, "; "-separated: the stages past a limit, the stages' own warnings
  // (several steady states of a tank), the stages within the margin of a
  // limit; empty when there is nothing to tell.
  std::string message;
};

// What one thread keeps between its runs: the train options and the
// solver state (CVODE re-initialized, not re-created, from run to run).
// Reuse does not change results: a reused workspace gives exactly the
// numbers of a fresh one (tests/sparse_jacobian_test.cpp,
// tests/cstr_test.cpp). What does carry over is explicit: the warm starts
// in train.warm_starts, which evaluate_point() sets from each run for the
// next and the sweep clears where a chain starts (sweep.hpp), so output
// stays identical whatever the number of threads or shards.
struct PointWorkspace {
  TrainOptions train;
  TrainWorkspace solver{};
};

// Runs the train of `point` (stirred tanks warm-started from
// ws.train.warm_starts) and extracts every column; then sets
// ws.train.warm_starts to this run's stirred-tank steady states, or
// clears them when the run failed (a failed run passes no guess on).
// Never throws for a failure of the run itself (it becomes the status and
// message); lets other exceptions (out of memory, programmer errors)
// through.
PointResult evaluate_point(const Case& point, const OutputSpec& outputs, PointWorkspace& ws);

// The row of a train already run (a batched run, run_trains_batched): its
// columns, or SolverFailure for a non-finite value, as evaluate_point.
PointResult evaluate_result(const TrainResult& r, const OutputSpec& outputs);

}  // namespace rxtrain::sweep
