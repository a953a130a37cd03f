// The interstage-cooling check: can the train as given reach the case's
// train-level target within the catalyst's temperature window, and if not,
// how many adiabatic beds with intercoolers (interstage heaters for an
// endothermic reaction) reach it under a stated simple policy. SI units
// throughout (T in K, volumes in m3, masses in kg, duties in W, heat added
// to the stream positive).
//
// Policy. Bed 1 is fed at the case's feed temperature; every bed is an
// adiabatic PFR with the first reactor's bulk density (hence its rate
// basis). Each bed runs until it is `approach` of the way from its inlet
// conversion to its adiabatic equilibrium conversion X_ad_eq, or until its
// temperature reaches the limit it moves towards (exothermic: T_max;
// endothermic: T_in_min), or until the target, whichever comes first. An
// exchanger then returns the stream to bed 1's inlet temperature
// (ReturnTo::Inlet) or to the maximum-rate temperature T_opt at that
// conversion clipped to [T_in_min, T_max] (ReturnTo::MaxRate), and the next
// bed starts. Greedy beds are the fewest this policy allows.
//
// Floor of the max-rate policy. Near the approach point T_opt can lie a few
// kelvin from the bed's outlet (or above it): an exchanger taking back a
// sliver of the bed's temperature change is one nobody builds. An exchanger
// must take back at least `min_return` of the change of the bed before it
// (common practice, no source); where the return to T_opt would take less,
// the bed runs on along its adiabatic line to the first point where it
// takes that much (at most 1 - (1 - approach)^2 of the way to X_ad_eq), or
// to the target or the limit if they come first. Where the bed cannot run
// on far enough, the exchanger takes back exactly the floor (past T_opt).
//
// Example:
//   StagingOptions o;
//   o.approach = 0.9;
//   StagingResult s = run_staging(c, o);  // c has target: {conversion: 0.92}
//   if (!s.reachable) explain(s.limited_by, s.limiting_stage, s.as_given);
//   if (s.target_reached) report(s.beds_needed, s.beds, s.coolers);
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/models/equilibrium.hpp"
#include "rxtrain/stages/solver_options.hpp"
#include "rxtrain/studies/bed_layout.hpp"

namespace rxtrain {

enum class ReturnTo { Inlet, MaxRate };

// The first limit the train as given meets on the way to the target.
//   Equilibrium: the target lies beyond X_ad_eq of a bed (the last reactor,
//                or a sized stage whose own target is beyond its X_ad_eq);
//   TMax:        T_max is passed before the target (exothermic);
//   TInMin:      the temperature falls below T_in_min before the target
//                (endothermic: the counterpart of TMax);
//   Size:        only more catalyst is needed;
//   None:        the train reaches the target within its limits.
enum class StagingLimit { None, Equilibrium, TMax, TInMin, Size };
// "equilibrium", "T_max", "T_in_min", "size"; "" for None.
const char* limit_name(StagingLimit l);
const char* return_to_name(ReturnTo r);  // "inlet", "max-rate"

struct StagingOptions {
  // Fraction of the way from a bed's inlet conversion to its X_ad_eq at
  // which the bed ends, in (0, 1). 0.9 leaves the last, slowest tenth of
  // the approach (where catalyst buys little) to the next bed.
  double approach = 0.9;
  // Temperature the exchangers return the stream to.
  ReturnTo return_to = ReturnTo::Inlet;
  // MaxRate: the least fraction of a bed's temperature change the exchanger
  // after it takes back, in [0, 1) (see the floor above).
  double min_return = 0.2;
  // Most beds tried before the target is called out of reach; ten is more
  // than any adiabatic train built.
  int max_beds = 10;
  // The check of every stage (as given and staged) against the limits:
  // its findings are the first design warnings (limit_check.hpp).
  LimitCheckOptions limit_check;
  // Add the equilibrium views (the equilibrium curve, the maximum-rate
  // locus, Levenspiel curves) to as_given_run and staged_run, for figures.
  bool equilibrium_views = false;
  // How the stages (as given and staged) are solved.
  SolverOptions solvers;

  // Empty when valid, else a message naming the bad field.
  std::string validate() const;
};

// Where a bed meets a temperature limit: conversion, position in the bed
// (m3 from its inlet) and the limit itself.
struct LimitPoint {
  double X = 0;
  double V = 0;  // m3
  double T = 0;  // K
  // Beyond the bed's given volume (an undersized bed that would pass the
  // limit before the target if it were enlarged).
  bool beyond_bed = false;
};

// What limits a stage of the train as given; report/staging_report.hpp
// phrases it. The limit met is the result's (T_max exothermic, T_in_min
// endothermic); X_ad_eq, T_ad_eq, X_out and the volume are the stage's.
enum class StageNoteKind {
  NotRun,                      // a sized stage before it (blocked_by) cannot reach its own target
  OwnTargetBeyondEquilibrium,  // its own target (own_target) lies beyond its X_ad_eq
  TargetBeyondEquilibrium,     // the train's target lies beyond its X_ad_eq
  FedPastLimit,                // fed already past the limit
  PassesLimit,                 // meets the limit at `at`, before the target or after it
  EnlargedPassesLimit,         // short; enlarged, it would meet the limit at `at` first
  NeedsCatalyst,               // short; volume_needed (catalyst_needed) would reach the target
  NeedsVolume,                 // short; only more volume is needed (a stirred tank)
};

struct StageNote {
  StageNoteKind kind = StageNoteKind::NotRun;
  std::string blocked_by;                 // NotRun: the stage's id
  double own_target = 0;                  // OwnTargetBeyondEquilibrium
  LimitPoint at;                          // PassesLimit, EnlargedPassesLimit
  bool before_target = false;             // PassesLimit: met before the target
  double volume_needed = 0;               // NeedsCatalyst: m3
  std::optional<double> catalyst_needed;  // NeedsCatalyst: kg, with a bulk density
};

// One stage of the train as given, against the target and the limits.
struct AsGivenStage {
  std::string id;
  StageKind kind = StageKind::Pfr;
  bool ran = false;                                  // false: the walk stopped before this stage
  double T_in = 0, T_out = 0, T_max = 0, T_min = 0;  // K
  double X_in = 0, X_out = 0;
  std::optional<double> volume;  // m3
  // Reactors with a reversible key reaction: the most the stage can reach
  // from its inlet at any size.
  std::optional<double> X_ad_eq, T_ad_eq;
  // What limits this stage, empty when nothing does; a second note is what
  // also holds it ("...; also, it ...").
  std::vector<StageNote> notes;
};

// Where the staging loop stops before the target for want of a bed that
// can progress (report/staging_report.hpp phrases it, with the answer).
enum class StagedStopKind {
  None,          // the target was reached, or max_beds were built
  FedPastLimit,  // bed `bed` would be fed at or past the limit
  NoProgress,    // bed `bed` is fed at equilibrium
  EndsAtInlet,   // bed `bed` meets the limit at its inlet
};
struct StagedStop {
  StagedStopKind kind = StagedStopKind::None;
  int bed = 0;   // 1-based
  double T = 0;  // K, its inlet
  double X = 0;  // its inlet conversion
};

// A bed of the staged answer (Bed: bed_layout.hpp).
struct StagedBed : Bed {
  double T_ad_eq = 0;  // K, where the bed's adiabatic line meets equilibrium
  // Why the bed ends: "approach", "T_max", "T_in_min" or "target";
  // "floor" when it ran on past its approach point to where the exchanger
  // after it takes back min_return of its temperature change.
  std::string ended_by;
};

struct StagingResult {
  std::string title;
  std::string key;    // key species id
  double target = 0;  // train-level target conversion
  TemperatureLimits limits;
  bool exothermic = true;  // sign of the key reaction's dH at the feed
  double feed_T = 0;       // K
  // Adiabatic temperature change of the feed at full conversion of the
  // key (design_checks.hpp); K, signed.
  std::optional<double> dT_ad;
  // Policy actually used.
  double approach = 0.9;
  ReturnTo return_to = ReturnTo::Inlet;
  double min_return = 0.2;
  int max_beds = 10;

  // ---- the train as given
  bool reachable = false;  // reaches the target within the limits
  StagingLimit limited_by = StagingLimit::None;
  std::string limiting_stage;             // id, its notes say why; empty for None
  std::optional<LimitPoint> limit_point;  // TMax / TInMin: where it is met
  std::optional<double> volume_needed;    // Size: volume of the last bed to reach the target
  double as_given_conversion = 0;
  std::vector<AsGivenStage> as_given;

  // ---- the staged answer
  bool target_reached = false;      // by the staged beds within max_beds
  int beds_needed = 0;              // when target_reached
  std::vector<StagedBed> beds;      // the beds built (max_beds when not reached)
  std::vector<Interstage> coolers;  // between beds: beds.size() - 1
  double staged_conversion = 0;     // outlet of the last bed: the most reachable when short
  // Inlet policy: X_eq at bed 1's inlet temperature, which any number of
  // beds approaches but never passes. Empty for the max-rate policy.
  std::optional<double> conversion_limit;
  // Why the beds stopped short of the target, if a bed did.
  StagedStop stop;

  // Full stage results, for the design checks and reports (with the
  // equilibrium views when options.equilibrium_views).
  TrainResult as_given_run;  // the stages that ran
  TrainResult staged_run;    // beds and exchangers in order
  std::vector<std::string> warnings;
};

// Throws InputError when the case has no train-level target (located at
// the file), when the key's reaction is not reversible (located at that
// reaction) or when the train has no reactor; SolverError when a stage
// fails numerically.
StagingResult run_staging(const Case& c, const StagingOptions& options = {});

}  // namespace rxtrain
