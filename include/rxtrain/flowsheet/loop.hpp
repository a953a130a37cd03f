// A train with a feed-effluent interchanger is a loop: the interchanger's
// cold side heats the stream arriving at it with the outlet of a later stage
// (`hot_from`), so what enters the beds depends on what leaves them. The
// loop is solved on one tear variable, the cold side's outlet temperature
// T: a pass assumes T, runs the stages from the interchanger to `hot_from`,
// exchanges heat with the stage's outlet and returns the cold outlet that
// exchange gives, g(T). Every steady state is a root of g(T) - T; the
// roots are found by scanning T over the whole range it can take and
// refining each sign change by Brent (docs/stability.md, "Feed-effluent
// loops").
#pragma once

#include <vector>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

// One pass of a loop at an assumed tear.
struct LoopPass {
  double T_assumed = 0;   // K
  double T_computed = 0;  // K, g(T)
  double T_cold_in = 0;   // K, the stream arriving at the cold side
  double T_hot_in = 0;    // K, `hot_from`'s outlet
  double T_peak = 0;      // K, the highest temperature in any stage
  double conversion = 0;  // at the train's outlet
  // K, a bound on the rise the reactions can give the cold side's inlet
  // stream (each exothermic reaction to the end of its scarcest reactant).
  double heat_bound = 0;
};

// The map g of a case's loop, for the train solver, `stability` and tests.
// Holds references: the case, options and workspace outlive it.
class LoopMap {
 public:
  // Throws InputError when the case has no interchanger.
  LoopMap(const Case& c, const TrainOptions& options, TrainWorkspace& ws);
  // One pass (the stages' results not kept).
  LoopPass operator()(double T_assumed) const;
  // One pass that fills `result`'s stages (one per stage of the case, the
  // interchanger's with its InterchangerResult), outlet and conversion.
  LoopPass run(double T_assumed, TrainResult& result) const;
  // g'(T) by a central difference of step h.
  double gain(double T, double h) const;
  // The temperature of the stream arriving at the cold side (it does not
  // depend on the tear: the stages before the interchanger run first).
  double cold_inlet_temperature() const;

 private:
  LoopPass pass(double T_assumed, TrainResult* result) const;
  const Case& c_;
  const TrainOptions& options_;
  TrainWorkspace& ws_;
  const InterchangerSpec& x_;
  std::size_t cold_ = 0, hot_ = 0;  // the interchanger's and hot_from's positions
};

// What solving a loop finds: every steady state (lowest tear first), the
// cold-start one, the range scanned and the passes it took.
struct LoopSolution {
  std::vector<LoopState> states;
  int cold_start = -1;
  double T_low = 0, T_high = 0;  // K
  bool capped = false;           // the range stopped at kLoopCeiling
  int passes = 0;
};

// The scan never goes above this, K: no thermo data reach further.
inline constexpr double kLoopCeiling = 3000.0;

// Every steady state of the loop. Throws SolverError when none exists in
// the range (the cold side would have to be cooled: the "hot" side arrives
// colder than the cold side's inlet) or a pass fails.
LoopSolution solve_loop(const LoopMap& g, const LoopOptions& options);

// run_train for a case with an interchanger (run_train calls it): every
// steady state, and the stages at the cold-start state.
TrainResult run_loop_train(const Case& c, const TrainOptions& options, TrainWorkspace& ws);

}  // namespace rxtrain
