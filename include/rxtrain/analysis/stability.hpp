// Where a stirred tank can flip: its steady states followed as one numeric
// field of the case (feed temperature, volume, activity, ...) moves over
// [lo, hi], by pseudo-arclength continuation (solvers/continuation.hpp),
// so that the branches are followed through their turning points instead
// of jumping from one to another. Each point carries its stability (the
// eigenvalues of the tank's linearized balances, models/tank_stability);
// the turning points are refined (the whole state: the reactor temperature
// there to the corrector's tolerance) and named ignition or extinction.
// Branches are traced from every steady state at both ends of the range; a
// closed branch (an isola) that touches neither end is not found.
// A train with a feed-effluent interchanger is followed the same way on its
// loop's tear (flowsheet/loop.hpp), whatever `stage` says.
// A tubular bed has one steady state along a field: for it the study is
// the parametric sensitivity of its peak temperature and the critical value
// where that peaks (analysis/runaway.hpp).
// Results are for screening and study.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/analysis/runaway.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/models/tank_stability.hpp"
#include "rxtrain/solvers/continuation.hpp"
#include "rxtrain/stages/solver_options.hpp"

namespace rxtrain {

struct StabilityOptions {
  // The stirred tank followed or the tubular bed scanned (its id); empty:
  // the case's first stirred tank, or without one its first tubular
  // reactor. The stages before it run at each value to give its inlet.
  std::string stage;
  // The range of the field, SI, lo < hi.
  double lo = 0, hi = 1;
  // The continuation, in scaled unknowns (flows / feed flow, T / feed T)
  // and the field scaled to [0, 1] over the range: ds_max = 0.02 puts
  // about 50 points or more on each branch that spans the range.
  ContinuationOptions continuation;
  // How the tanks at the ends of the range (the starts) and the stages
  // before the tank are solved.
  SolverOptions solvers;
  // A tubular bed's scan: its grid and central differences.
  SensitivityOptions sensitivity;
};

// One point of a branch.
struct StabilityPoint {
  double value = 0;  // the field, SI
  double T = 0;      // K, the tank's contents (= outlet)
  double X = 0;      // overall key conversion at the tank's outlet
  StabilityKind kind = StabilityKind::Stable;
  bool stable() const { return kind == StabilityKind::Stable; }
};

enum class TurningKind {
  Ignition,    // the cold branch ends: past it the tank jumps to a hot state
  Extinction,  // the hot branch ends: past it the tank falls to a cold state
};

struct TurningPoint {
  TurningKind kind = TurningKind::Ignition;
  double value = 0;  // SI
  double T = 0;      // K
  double X = 0;
};

// A run of points of one stability along a traced curve (consecutive runs
// share their end points, so the curve is drawn without gaps).
struct StabilityBranch {
  bool stable = true;
  std::vector<StabilityPoint> points;
};

// van Heerden's picture of a tank at the case's own values: the heat the
// reactions release at T (with the mole balances solved at that T) and the
// heat the flow and the wall take away, W; they cross at the steady states.
struct HeatCurvePoint {
  double T = 0;           // K
  double generation = 0;  // W, -V sum_j R_j dH_j(T)
  double removal = 0;     // W, sum_i F_i,in (h_i(T) - h_i(T_in)) + UA (T - T_coolant)
};

struct StabilityResult {
  std::string stage;  // the tank's (or bed's) id
  // A tubular bed: the sensitivity scan below, no branches.
  bool tubular = false;
  // A loop with an interchanger (`stage` is the interchanger's id): the
  // branches are the loop's steady states, each point's T the
  // interchanger's cold outlet, stable where the loop gain is below 1
  // (docs/stability.md, "Feed-effluent loops"); no heat curves.
  bool loop = false;
  std::string param;  // the field's path
  std::string unit;   // its SI unit ("K", "m3", "1")
  double lo = 0, hi = 0;
  double base_value = 0;  // the case's own value of the field
  std::vector<StabilityBranch> branches;
  std::vector<TurningPoint> turning_points;  // in order of value
  // [lo, hi] of the values with several steady states when the curve has
  // exactly one ignition and one extinction.
  std::optional<std::pair<double, double>> hysteresis;
  // At the case's value of the field, over the temperatures the branches
  // span (an isothermal tank has none: its temperature is held).
  std::vector<HeatCurvePoint> heat_curves;
  // A tubular bed: S at every point of the grid that could be run, and
  // the critical value where |S| peaks (empty when it peaks at an end of
  // the range).
  std::vector<SensitivityPoint> sensitivity;
  std::optional<CriticalValue> critical;
  int runs = 0;                       // whole runs of a tubular bed's train
  std::vector<std::string> warnings;  // a branch given up, the range cut, ...
  int points = 0;                     // points on every branch
  int corrector_iterations = 0;
};

// `rxtrain run`'s check of each adiabatic or cooled stirred tank of
// `result` (at the volume it ran with): a turning point of its steady
// states in the feed temperature within `margin` K of the case's feed
// temperature, where a small upset of the feed would ignite or extinguish
// it. One sentence per finding (a train warning, worded here as the
// train's other warnings are); a tank whose check fails gets a sentence
// saying so.
std::vector<std::string> flip_warnings(const Case& c, const TrainResult& result, double margin);

// Throws InputError when the case has no such reactor, when the reactor
// is sized to a target (continuation and the scan follow one of given
// size), when a tubular bed is isothermal or the field belongs to a stage
// after it, and SolverError when no steady state is found at either end of
// the range (a tank) or no point of the scan can be run (a bed).
StabilityResult run_stability(const Case& c, const CaseField& field,
                              const StabilityOptions& options);

}  // namespace rxtrain
