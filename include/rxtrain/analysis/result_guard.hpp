// The guard at the result boundary: no NaN or Inf may reach a table, JSON,
// CSV or report. Called once on the finished TrainResult, before anything
// is rendered; a non-finite number becomes an error that names where it
// arose, instead of "nan" in an output.
#pragma once

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

// Throws SolverError naming the stage (or "feed" / "train outlet"), the
// field and, for profiles, the position, e.g.
//   "non-finite result: stage R1, profile point 17 (V = 0.42 m3), T = nan".
void check_finite(const TrainResult& result);

}  // namespace rxtrain
