// A train of stages run in order, each fed with the outlet of the one
// before. run_train() is the only entry point the command line needs.
#pragma once

#include <memory>
#include <span>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/kinetics/extents.hpp"
#include "rxtrain/stages/cstr.hpp"
#include "rxtrain/stages/levenspiel.hpp"
#include "rxtrain/stages/limit_check.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "rxtrain/stages/pfr_batch.hpp"
#include "rxtrain/stages/solver_options.hpp"
#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

// Warm starts for one stirred-tank stage: states to try first (see
// CstrOptions::guesses), e.g. that stage's steady states in a neighbouring
// run of a sweep.
struct CstrWarmStart {
  std::string stage;  // stage id
  std::vector<SteadyState> states;
};

// How a train with a feed-effluent interchanger (a loop) is solved: on its
// tear, the interchanger's cold-side outlet temperature (flowsheet/loop.hpp).
struct LoopOptions {
  // The scan's spacing, K: every sign change of (computed - assumed) on this
  // grid is a steady state, refined by Brent. Two states closer than this
  // (near a turning point) can fall in one step and be missed; `rxtrain
  // stability` follows them through the fold. 1 K: a light-off spans tens of
  // kelvin, and a run of a bed costs about a millisecond.
  double scan_step = 1.0;
  // At most this many scan points; a wider range takes a coarser step.
  int max_scan_points = 4000;
  // Relative tolerance of each root on the tear (Brent).
  double root_tolerance = 1e-13;
  // Central-difference step of the loop gain, K.
  double gain_step = 1e-3;
  // Passes of the successive substitution from the feed's temperature that
  // finds the cold-start state.
  int max_passes = 400;
};

// One steady state of a loop.
struct LoopState {
  double T_cold_out = 0;  // K, the tear: the interchanger's cold-side outlet
  double conversion = 0;  // overall key conversion at the train's outlet
  double T_peak = 0;      // K, the highest temperature in any stage
  // d(T_cold_out computed)/d(T_cold_out assumed) at the state: a
  // disturbance of the tear returns after one pass multiplied by it
  // (docs/stability.md); the state is unstable above 1.
  double gain = 0;
  bool stable() const { return gain < 1; }
};

struct TrainOptions {
  // How every stage is solved (solver_options.hpp): one setting holds for
  // every tube, every tank and the tubular runs inside the tanks.
  SolverOptions solvers;
  // Warm starts of stirred-tank stages by stage id, passed on as that
  // stage's CstrOptions::guesses. They add Newton starts, so a result may
  // differ from a cold run's in the last digits and may hold a steady
  // state more. Empty (the default): every tank starts cold.
  std::vector<CstrWarmStart> warm_starts;
  // Compute each stage's equilibrium record, the equilibrium curve and the
  // maximum-rate locus when a reversible reaction exists, and the
  // Levenspiel curves of every reactor stage. Off for callers
  // that run a train many times and need only its outlet.
  bool equilibrium_views = true;
  // With the views: also the equilibrium curve, the maximum-rate locus and
  // the Levenspiel curves, which only the JSON, CSV and report show (about
  // two thirds of the views' cost). Off: each stage's equilibrium record
  // and reach only, all the text table needs.
  bool view_curves = true;
  // Points of the equilibrium curve and of the maximum-rate locus.
  int curve_points = 61;
  // The check of every reactor stage against the case's limits (its
  // margin); crossings are located only where pfr.full_profile is on.
  LimitCheckOptions limit_check;
  // Trains with an interchanger.
  LoopOptions loop;
};

struct TrainResult {
  std::string title;
  std::vector<std::string> species;    // ids, column order of every output
  std::string key;                     // key species id
  std::vector<std::string> reactions;  // ids, order of each stage's effectiveness
  // The reactions' coefficients and rate bases: each stage's extents and
  // mean rates are read from its flows with them (kinetics/extents.hpp).
  Stoichiometry stoichiometry;
  // kg/mol in species order, for mass flows; empty when a species has none
  // (a gas case may omit them).
  std::vector<double> molar_mass;
  Stream feed;
  std::vector<StageResult> stages;    // in train order
  Stream outlet;                      // outlet of the last stage
  double conversion = 0;              // overall key conversion at the outlet
  std::vector<std::string> warnings;  // loader and stage warnings, in order
  // Every reactor stage against the case's limits (filled by run_train).
  LimitCheck limit_check;
  // X_eq(T) at the feed's composition and pressure over the temperatures
  // the train spans, and T_opt(X) of the key reaction where it is
  // reversible and exothermic; empty without a reversible reaction.
  std::vector<EquilibriumCurvePoint> equilibrium_curve;
  std::vector<MaxRatePoint> max_rate_locus;
  // One Levenspiel curve per reactor stage (filled with the views above).
  std::vector<LevenspielCurve> levenspiel;
  // The case's wanted products (ids) and the train's yield and selectivity
  // of each at its outlet (flowsheet/yields.hpp); empty without products.
  std::vector<std::string> products;
  std::vector<double> yield;
  std::vector<std::optional<double>> selectivity;
  // A train with an interchanger: every steady state of its loop, lowest
  // tear first, and which one the stages and outlet describe (the
  // cold-start state, reached by successive substitution from the tear at
  // its inlet temperature, as a plant starts up); the tear's range scanned.
  // Empty without an interchanger.
  std::vector<LoopState> loop_states;
  int loop_cold_start = -1;                // index into loop_states
  double loop_T_low = 0, loop_T_high = 0;  // K, the scan's range

  // An empty result for c: its title, species, key, feed and loader
  // warnings, ready for its stages.
  static TrainResult for_case(const Case& c);
};

// What repeated runs of trains reuse: the SUNDIALS context, the tubular
// stages' integrator and buffers (see PfrWorkspace) and the stirred tanks'
// buffers (see CstrWorkspace). One per thread:
// distinct workspaces on distinct threads share nothing mutable (a Case is
// read-only, and the unit database and YAML parser are used only while
// loading it). Movable, not copyable.
//
// Example:
//   TrainWorkspace ws;
//   for (const Case& c : variants) outlets.push_back(run_train(c, options, ws).outlet);
class TrainWorkspace {
 public:
  TrainWorkspace();
  ~TrainWorkspace();
  TrainWorkspace(TrainWorkspace&&) noexcept;
  TrainWorkspace& operator=(TrainWorkspace&&) noexcept;
  TrainWorkspace(const TrainWorkspace&) = delete;
  TrainWorkspace& operator=(const TrainWorkspace&) = delete;

  const SunContext& context() const { return *ctx_; }
  PfrWorkspace& pfr() { return *pfr_; }
  CstrWorkspace& cstr() { return *cstr_; }
  PfrBatchWorkspace& pfr_batch() { return *pfr_batch_; }

 private:
  std::unique_ptr<SunContext> ctx_;  // on the heap: pfr_ and cstr_ point at it
  std::unique_ptr<PfrWorkspace> pfr_;
  std::unique_ptr<CstrWorkspace> cstr_;
  std::unique_ptr<PfrBatchWorkspace> pfr_batch_;
};

// Runs every stage of the case in order. Throws SolverError (naming the
// stage and position), InfeasibleError (a SolverError: a target out of
// reach, located at the stage's entry in the case file, quoting what the
// stage can reach) or InputError (a target not above the stage's inlet
// conversion, also located there).
TrainResult run_train(const Case& c, const TrainOptions& options = {});

// Fills what TrainOptions::equilibrium_views adds (each stage's equilibrium
// record, the equilibrium curve, the maximum-rate locus, the Levenspiel
// curves) into a result built with the views off or assembled stage by
// stage (staging, optimize), for its report. A view that cannot be
// computed becomes a warning in the result.
void add_equilibrium_views(const Case& c, const TrainOptions& options, TrainResult& result);
// The same on `ws`: the reaches reuse its integrator instead of creating
// one (run_train's path).
void add_equilibrium_views(const Case& c, const TrainOptions& options, TrainResult& result,
                           TrainWorkspace& ws);
// Same result, reusing `ws` instead of creating the solvers afresh: the
// fast path for many runs (the per-run cost is in docs/performance.md).
TrainResult run_train(const Case& c, const TrainOptions& options, TrainWorkspace& ws);

// The case's limits against `stages` under options.limit_check, locating
// crossings only where the tubular stages kept full profiles: what
// run_train stores in TrainResult::limit_check, for a train assembled
// stage by stage (staging, optimize).
LimitCheck check_limits(const Case& c, const TrainOptions& options,
                        std::span<const StageResult> stages);

// Sets `warm_starts` to the steady states of every stirred-tank stage of
// `result`, the warm starts of a next run of the same case (reusing the
// vectors' storage).
void set_warm_starts(const TrainResult& result, std::vector<CstrWarmStart>& warm_starts);

// True when run_trains_batched can run c's train under `options`: every
// reactor a tubular stage run_pfr_batch takes (pfr_batchable), and no
// equilibrium views (they need full profiles).
bool train_batchable(const Case& c, const TrainOptions& options);

// Runs the trains of several cases with one layout (the same stages in the
// same order, as the points of one study have) side by side, stage by
// stage: exchangers per case, tubular stages as one batch (run_pfr_batch,
// which says how the numbers relate to a lone run's). Results in case
// order, as run_train gives them with options.equilibrium_views off.
// Every case must pass train_batchable. Throws what a stage throws, for
// the batch as a whole: a caller that needs each run's own outcome reruns
// the cases one by one with run_train.
std::vector<TrainResult> run_trains_batched(std::span<const Case* const> cases,
                                            const TrainOptions& options, TrainWorkspace& ws);

}  // namespace rxtrain
