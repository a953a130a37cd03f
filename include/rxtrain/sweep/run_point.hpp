// One point of a study: run the train of an edited case and read the
// output columns. Every run of a sweep goes through evaluate_point(), so
// a faster way to run a train (reusable solver state in the workspace)
// changes this one function.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain::sweep {

// How a run ended. A failed run is a row with its reason, never dropped.
enum class RunStatus {
  Ok,
  Infeasible,     // a target out of reach (equilibrium, complete conversion)
  SolverFailure,  // the integrator or Newton failed, or a non-finite result
  InvalidInput,   // a sampled value outside its field's range
};

// "ok", "infeasible", "solver-failure", "invalid-input".
const char* run_status_name(RunStatus s);

struct PointResult {
  std::vector<std::optional<double>> outputs;  // SI; all empty unless Ok
  RunStatus status = RunStatus::Ok;
  std::string message;  // why the run failed; empty when Ok
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
