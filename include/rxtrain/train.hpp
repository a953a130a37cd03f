// A train of stages run in order, each fed with the outlet of the one
// before. run_train() is the only entry point the command line needs.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case.hpp"
#include "rxtrain/levenspiel.hpp"
#include "rxtrain/stages/cstr.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

struct TrainOptions {
  PfrOptions pfr;    // tubular stages (CVODE tolerances, sizing limit)
  CstrOptions cstr;  // stirred tanks (Newton, starts)
  // Compute each stage's equilibrium record, the equilibrium curve and the
  // maximum-rate locus when a reversible reaction exists, and the
  // Levenspiel curves of every reactor stage. Off for callers
  // that run a train many times and need only its outlet.
  bool equilibrium_views = true;
  EquilibriumOptions equilibrium;
  // Points of the equilibrium curve and of the maximum-rate locus.
  int curve_points = 61;
};

struct TrainResult {
  std::string title;
  std::vector<std::string> species;  // ids, column order of every output
  std::string key;                   // key species id
  Stream feed;
  std::vector<StageResult> stages;    // in train order
  Stream outlet;                      // outlet of the last stage
  double conversion = 0;              // overall key conversion at the outlet
  std::vector<std::string> warnings;  // loader and stage warnings, in order
  // X_eq(T) at the feed's composition and pressure over the temperatures
  // the train spans, and T_opt(X) of the key reaction where it is
  // reversible and exothermic; empty without a reversible reaction.
  std::vector<EquilibriumCurvePoint> equilibrium_curve;
  std::vector<MaxRatePoint> max_rate_locus;
  // One Levenspiel curve per reactor stage (filled with the views above).
  std::vector<LevenspielCurve> levenspiel;
};

// Runs every stage of the case in order. Throws SolverError (naming the
// stage and position) or InputError (a target out of reach, located at the
// stage's entry in the case file).
TrainResult run_train(const Case& c, const TrainOptions& options = {});

}  // namespace rxtrain
