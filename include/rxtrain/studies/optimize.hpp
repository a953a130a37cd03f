// Optimal design of a train of adiabatic beds with intercoolers (interstage
// heaters for an endothermic reaction): for N beds, the bed inlet
// temperatures and the conversion each bed reaches that minimize the total
// catalyst mass (per-catalyst rates) or bed volume (per-volume rates) for
// the case's train-level target, with every temperature in the catalyst's
// window [T_in_min, T_max]. SI units throughout (T in K, masses kg,
// volumes m3, duties W, heat added to the stream positive).
//
// Model. One reversible reaction (the case's only reaction) consumes the
// key, so the stream's composition is a function of the overall key
// conversion X alone and an adiabatic bed follows the adiabatic line
// T(X) from its inlet (steady-flow energy balance with the species' own
// heat capacities). A bed from X_in to X_out holds
//   W = F_key,feed / |nu_key| * integral_{X_in}^{X_out} dX / r(X, T(X))
// (the plug-flow design equation with X as the independent variable; r
// per kg of catalyst, or per m3 for per-volume rates). The integral is
// taken by Gauss-Legendre quadrature in u = -ln(X_e - X), X_e the bed's
// adiabatic equilibrium conversion, where the integrand is smooth up to
// equilibrium; a fixed rule makes W a smooth function of the decisions,
// whose derivatives the same rule gives (analytic gradients, see
// docs/optimize.md).
//
// Decisions. The inlet temperature of every bed (bed 1's unless
// fixed_feed_T) and, for beds 1..N-1, the fraction s of the way from the
// bed's inlet conversion to X_e at which it ends (X_out,N is the target).
// Constraints: T_in in [T_in_min, T_max] (bounds); the bed's far end within
// the window (its outlet, since T is monotone along an adiabatic bed of one
// reaction); the last bed able to reach the target.
//
// Method (NLopt). SLSQP with analytic gradients from
// several start layouts (equal and front-loaded conversion splits at the
// maximum-rate temperature, at the feed temperature and at the window's
// middle, and the `staging` policy's layout), COBYLA where SLSQP fails from
// a start; the best feasible layout is kept and polished by SLSQP until the
// inlet temperatures move less than `T_settle` between rounds.
//
// At the optimum the classical conditions for staged adiabatic reactors
// with intercooling hold (Konoki 1956; Aris, "The Optimal Design of
// Chemical Reactors", 1961): r(X_out,n, T_out,n) = r(X_out,n, T_in,n+1), and
// integral over bed n of d(1/r)/dT_in dX = 0 where T_in,n is not at a
// bound (tests/design_test.cpp checks both independently). Where a limit
// holds a bed they need not hold: a bed cut short at T_max leaves the rate
// after the exchanger behind it below the rate before (the stream is
// cooled further than to the equal-rate point). The result carries both
// conditions' residuals per exchanger and per bed, and which limit exempts
// each, so that no report claims a rule the layout breaks.
//
// Margin. options.margin narrows the window on both sides: every bed
// temperature within [T_in_min + margin, T_max - margin].
//
// Example:
//   DesignOptions o;
//   o.max_beds = 4;  // or o.beds = 3; neither: the case's reactor count
//   DesignResult d = optimize_design(c, o);  // c has target and limits
//   report(d.best.beds, d.best.coolers, d.best.total_catalyst, d.by_bed_count);
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/models/equilibrium.hpp"
#include "rxtrain/stages/limit_check.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "rxtrain/stages/solver_options.hpp"
#include "rxtrain/studies/bed_layout.hpp"
#include "rxtrain/studies/staging.hpp"

namespace rxtrain {

// Where the optimizer stands, for a progress line (the core never prints).
struct DesignProgress {
  int beds = 0;          // N of the layout being optimized
  int start = 0;         // 1-based start index; 0 during the polish
  int starts = 0;        // starts for this N
  long evaluations = 0;  // objective evaluations so far for this N
  // Best feasible total so far (kg or m3); empty until one is found.
  std::optional<double> best;
};

struct DesignOptions {
  // Number of beds. Empty: the case's number of reactor stages.
  std::optional<int> beds;
  // Optimize every N from 1 to max_beds (by_bed_count) and keep the least
  // total; excludes `beds`.
  std::optional<int> max_beds;
  // Keep bed 1's inlet at the feed temperature (no feed conditioning).
  bool fixed_feed_T = false;
  // K kept inside the catalyst's limits: every temperature in a bed within
  // [T_in_min + margin, T_max - margin]. The case as written and the
  // staging policy are judged against the same narrowed window.
  double margin = 0;
  // Gauss-Legendre panels and nodes per panel of each bed's integral (in u
  // = -ln(X_e - X)). 4 x 16 nodes, 64 rate evaluations a bed, match GSL
  // QAGS to 1e-8 in the tests (the integrand is smooth in u).
  int quadrature_panels = 4;
  int quadrature_nodes = 16;
  // Bounds on the fraction s of the way to X_e at which a bed ends: below
  // s_min a bed does nothing, at s_max = 1 - 1e-5 its last stretch costs
  // ln(1e5) times its near-equilibrium rate, far past any optimum (and the
  // checks' difference steps of 1e-6 stay short of X_e).
  double s_min = 1e-4;
  double s_max = 1.0 - 1e-5;
  // Polish rounds end when no inlet temperature moves more than this (K).
  double T_settle = 1e-3;
  // Objective evaluations allowed per local run.
  int max_evaluations = 4000;
  // A layout counts as feasible when no constraint is violated by more
  // than this: temperatures in units of the window's width (1e-9 of 200 K
  // is 0.2 uK), conversions absolute. Tight, so that no line-search
  // probe just past an active limit is kept as the best layout.
  double feasibility_tolerance = 1e-9;
  // Compare with the case as written and with the `staging` policy (each
  // runs the train once); off for callers that only need the optimum.
  bool compare = true;
  // The check of the optimum's train (and of the case as written) against
  // the limits (limit_check.hpp): its findings become warnings.
  LimitCheckOptions limit_check;
  // Add the equilibrium views (the equilibrium curve, the maximum-rate
  // locus, Levenspiel curves) to the optimum's train (DesignResult::train),
  // for figures.
  bool equilibrium_views = false;
  // How the checks and comparisons (and the equilibrium computations of
  // the optimization) are solved.
  SolverOptions solvers;
  // Called now and then while optimizing (from the calling thread).
  std::function<void(const DesignProgress&)> progress;

  // Empty when valid, else a message naming the bad field.
  std::string validate() const;
};

// A bed of an optimized layout (Bed: bed_layout.hpp; T is monotone along
// it, so T_max and T_min are its ends).
struct DesignBed : Bed {
  // Rate of the key reaction at the inlet and outlet, in its own basis
  // (mol/(kg s) or mol/(m3 s)).
  double rate_in = 0, rate_out = 0;
};

// A limit that holds a bed of a layout (active within 0.01 K; the window
// is the one narrowed by the margin).
enum class BedLimit {
  InletAtLow,        // T_in at T_in_min (+ margin)
  InletAtHigh,       // T_in at T_max (- margin)
  InletFixed,        // bed 1 fed at the feed temperature (fixed_feed_T)
  FarEndAtHigh,      // exothermic: the outlet, the bed's hottest point, at T_max (- margin)
  FarEndAtLow,       // endothermic: the outlet, its coldest point, at T_in_min (+ margin)
  AtEquilibriumEnd,  // X_out at the bed's adiabatic equilibrium (a bed 1..N-1)
};

struct ActiveLimit {
  int bed = 0;  // 0-based
  BedLimit limit = BedLimit::InletAtLow;
};

// How an optimality condition stands at a layout.
enum class ConditionState {
  Holds,        // its residual is within the tolerance
  Limited,      // an active limit next to it exempts it, and it does not hold
  Missed,       // nothing exempts it, yet it does not hold: the optimizer stopped short
  NotComputed,  // the residual could not be evaluated
};

// Condition (1) across the exchanger after bed `after` (0-based): the rate
// at the bed's outlet equals the rate at the next bed's inlet, at the same
// conversion. Holds within 1e-4 relative (measured at free optimums: below
// 1e-6).
struct InterstageCondition {
  int after = 0;
  double X = 0;
  double rate_before = 0, rate_after = 0;  // the key reaction's, in its own basis
  double residual = 0;                     // (rate_after - rate_before) / rate_before
  ConditionState state = ConditionState::Holds;
  std::vector<ActiveLimit> exempt_by;  // the active limits that exempt it
};

// Condition (2) of bed `bed`: its size is stationary in its inlet
// temperature at fixed inlet and outlet conversions (the cooler before it
// absorbs the change). Holds when the Newton step to stationarity, -W'/W'',
// is within 0.01 K.
struct InletCondition {
  int bed = 0;
  double dsize_dT = 0;          // kg/K or m3/K
  std::optional<double> shift;  // K, the Newton step; empty where W'' <= 0 or not computed
  ConditionState state = ConditionState::Holds;
  std::vector<ActiveLimit> exempt_by;
};

// What keeps the best layout found for N beds from the target or the
// window (the constraint it violates most); shortfall_message phrases it.
enum class ShortfallKind {
  NotEvaluable,       // no layout could be evaluated
  LastBedShort,       // the last bed can reach at most X_reach, short of the target
  PassesLimit,        // bed `bed` ends past the window's far end (T_out)
  BeyondEquilibrium,  // bed `bed` is fed beyond equilibrium
};
struct LayoutShortfall {
  ShortfallKind kind = ShortfallKind::NotEvaluable;
  int bed = 0;                // 0-based
  double T_in = 0, X_in = 0;  // its inlet
  double T_out = 0;           // K, its far end
  double X_reach = 0;         // LastBedShort
};

// One optimized layout of N beds.
struct DesignLayout {
  int beds = 0;
  bool feasible = false;
  LayoutShortfall shortfall;  // infeasible: what cannot be met
  std::vector<DesignBed> bed;
  std::vector<Interstage> coolers;       // between beds: N - 1 (C1, ...; H1, ... heating)
  Interstage feed_conditioning;          // E0: feed T -> bed 1's inlet
  double total_volume = 0;               // m3
  std::optional<double> total_catalyst;  // kg (per-catalyst rates)
  double total_duty = 0;                 // W, sum of the interstage exchangers
  // In bed order (report/optimize_text.hpp phrases them).
  std::vector<ActiveLimit> active_constraints;
  std::vector<InterstageCondition> interstage;  // N - 1, one per exchanger between beds
  std::vector<InletCondition> inlets;           // N, one per bed
  // run_train of the layout (beds as catalyst masses or volumes): the
  // conversion it reaches and its total, as an independent check.
  double checked_conversion = 0;
  long evaluations = 0;  // objective evaluations, all starts and polish
  int starts = 0;        // starts tried
  int polish_rounds = 0;
};

// The case as written, against the same target and window.
// A temperature of the case as written outside the window narrowed by the
// margin (the limits themselves are its limit check's).
struct WindowExcursion {
  std::string stage;
  double T = 0;       // K, the stage's peak (above) or lowest point (below)
  bool above = true;  // above the window's top, else below its bottom
};

// The case as written, against the same target and window.
struct AsWrittenDesign {
  bool ran = false;
  std::string error;  // why it did not run (the error's message); empty when it ran
  double conversion = 0;
  bool reaches_target = false;
  bool within_limits = false;  // no excursion and no limit finding beyond Near
  std::vector<WindowExcursion> outside_window;
  LimitCheck limit_check;  // its findings other than Near count against it
  int reactors = 0;
  double total_volume = 0;               // m3
  std::optional<double> total_catalyst;  // kg, when every reactor has one
  double total_duty = 0;                 // W, its exchangers
};

// The `staging` policy's answer (default options: --approach 0.9,
// --return-to inlet), in the window narrowed by the margin.
struct StagingDesign {
  bool reached = false;
  int beds = 0;
  double total_volume = 0;
  std::optional<double> total_catalyst;
  StagingResult result;  // the whole answer (report/staging_report.hpp phrases it)
};

struct DesignResult {
  std::string title;
  std::string key;
  double target = 0;
  TemperatureLimits limits;
  bool exothermic = true;
  bool catalyst_objective = true;      // per-catalyst rates: minimize kg, else m3
  double feed_T = 0;                   // K
  double feed_P = 0;                   // Pa
  std::optional<double> bulk_density;  // kg/m3, of the first reactor
  double activity = 1;                 // the catalyst activity the beds are designed for
  bool fixed_feed_T = false;
  double margin = 0;                          // K, options.margin
  double window_low = 0, window_high = 0;     // K, the limits narrowed by the margin
  DesignLayout best;                          // the least total found (fewest beds on a tie)
  std::vector<DesignLayout> by_bed_count;     // N = 1..max_beds; empty without max_beds
  std::optional<AsWrittenDesign> as_written;  // with options.compare
  std::optional<StagingDesign> staging;       // with options.compare
  // The optimum's train (design_train, run by run_train) against the
  // limits: a bed at T_max is a Near finding with no margin left.
  LimitCheck limit_check;
  // The optimum's train as run_train ran it (the independent check), with
  // the equilibrium views when options.equilibrium_views: what a report
  // draws, so that no reporter runs a solver.
  TrainResult train;
  // train's conversion differs from the target by more than 1e-5:
  // the optimizer's quadrature and the ODE solver disagree.
  bool check_disagrees = false;
  // The first reactor has a bed with a pressure drop (Ergun): the optimum
  // is designed at constant pressure, then its beds, each built as that
  // reactor is (bed, pellet, viscosity), are run again with the pressure
  // drop. `error` holds why that run stopped (a bed's pressure reached
  // its floor), and `train` is then empty.
  struct PressureDropRun {
    TrainResult train;
    std::string error;
  };
  std::optional<PressureDropRun> with_pressure_drop;
  // K: the feed's adiabatic temperature rise at full conversion of the
  // key, set when it carries the feed past T_max (exothermic).
  std::optional<double> dT_ad_past_T_max;
  // The case's warnings and, when the staging policy could not be run,
  // its error. report/optimize_text.hpp's optimize_warnings adds what the
  // fields above say.
  std::vector<std::string> warnings;
};

// Throws InputError when the case lacks a train-level target or the limits
// T_max and T_in_min, has more than one reaction or an irreversible one,
// a margin that leaves no window, or (fixed_feed_T) a feed outside the
// window; InfeasibleError when no
// layout with the allowed number of beds meets the target within the
// window (naming the best reached); SolverError on a numerical failure.
DesignResult optimize_design(const Case& c, const DesignOptions& options = {});

// The words of a shortfall: the row of an infeasible bed count, and the
// reason optimize_design's InfeasibleError gives (an error is worded where
// it is thrown), so both say the same.
std::string shortfall_message(const DesignResult& d, const LayoutShortfall& s);

// The stages of a layout as a train the case format holds (layout_stages):
// an exchanger from the feed to bed 1's inlet temperature (when they differ
// and the feed is not fixed), then bed, exchanger, bed, ...; beds are
// adiabatic PFRs given by catalyst mass (per-catalyst rates) or volume,
// with the result's bulk density. Stage ids avoid the case's species and
// reaction ids.
std::vector<StageSpec> design_train(const Case& c, const DesignResult& d,
                                    const DesignLayout& layout);

}  // namespace rxtrain
