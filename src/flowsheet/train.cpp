#include "rxtrain/flowsheet/train.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <type_traits>

#include "rxtrain/flowsheet/loop.hpp"
#include "rxtrain/flowsheet/yields.hpp"
#include "rxtrain/stages/exchanger.hpp"
#include "rxtrain/stages/run_stage.hpp"

namespace rxtrain {

namespace {

// Equilibrium views are a reading aid: a failure to compute one is a
// warning in the result, never a failed run.
void add_equilibrium_records(const Case& c, const TrainOptions& options, TrainResult& result) {
  const Mechanism& mech = c.mechanism;
  if (!has_reversible_reaction(mech)) return;
  const ConversionBasis basis = c.conversion_basis();
  double T_lo = c.feed.T, T_hi = c.feed.T;
  for (auto& r : result.stages) {
    T_lo = std::min({T_lo, r.T_min, r.inlet.T, r.outlet.T});
    T_hi = std::max({T_hi, r.T_max, r.inlet.T, r.outlet.T});
    // A cooled stage's path lies on no adiabatic or isothermal line that
    // these views are drawn on.
    if (!is_reactor(r.kind) || !r.heat || r.coolant) continue;
    try {
      r.equilibrium =
          equilibrium_record(mech, r.inlet, r.outlet, *r.heat, ConversionBasis{c.key, r.F_key_fed},
                             options.solvers.equilibrium);
      if (r.equilibrium) {
        T_lo = std::min(T_lo, r.equilibrium->T_ad_eq);
        T_hi = std::max(T_hi, r.equilibrium->T_ad_eq);
      }
    } catch (const std::exception& e) {
      result.warnings.push_back(
          fmt::format("stage {}: equilibrium record not computed: {}", r.id, e.what()));
    }
  }
  if (!options.view_curves) return;
  // A margin around what the train spans, so the curve frames the paths.
  const double margin = std::max(20.0, 0.1 * (T_hi - T_lo));
  T_lo = std::max(options.solvers.equilibrium.T_min, T_lo - margin);
  T_hi = std::min(options.solvers.equilibrium.T_max, T_hi + margin);
  const int n = std::max(2, options.curve_points);
  try {
    result.equilibrium_curve =
        equilibrium_curve(mech, c.feed, basis, {T_lo, T_hi, (T_hi - T_lo) / (n - 1)}, {},
                          options.solvers.equilibrium);
    double X_hi = basis.conversion(c.feed);
    for (const auto& p : result.equilibrium_curve) X_hi = std::max(X_hi, p.X_eq);
    const double X_lo = basis.conversion(c.feed);
    if (X_hi > X_lo) {
      // Stop short of the curve's top, where T_opt runs off the window.
      const double span = X_hi - X_lo;
      for (auto& p : max_rate_locus(mech, c.feed, basis, X_lo + 0.01 * span, X_hi - 0.01 * span, n,
                                    T_lo, T_hi, options.solvers.equilibrium))
        if (p.interior) result.max_rate_locus.push_back(p);
    }
  } catch (const std::exception& e) {
    result.warnings.push_back(fmt::format("equilibrium curve not computed: {}", e.what()));
  }
}

// The train's stirred-tank options, from its one SolverOptions.
CstrOptions tank_options(const TrainOptions& options) { return options.solvers.tank(); }

// What each reactor stage can reach at any size (StageReach), and what a
// designer must be told about it: a sized bed whose conversion peaks
// inside it, a rated bed already past its peak.
void add_reaches(const Case& c, const TrainOptions& options, TrainResult& result,
                 TrainWorkspace& ws) {
  const Mechanism& mech = c.mechanism;
  for (auto& r : result.stages) {
    // A cooled stage's path lies on no adiabatic or isothermal line that
    // these views are drawn on.
    if (!is_reactor(r.kind) || !r.heat || r.coolant) continue;
    ReactorSpec spec{};
    spec.id = r.id;
    // The pellets too: the reach is on the rates the stage runs with.
    for (const auto& st : c.train)
      if (const auto* rs = std::get_if<ReactorSpec>(&st); rs && rs->id == r.id) {
        spec.pellet = rs->pellet;
        spec.tank_cooling = rs->tank_cooling;  // a cooled tank's branch is its own
      }
    spec.type = r.kind == StageKind::Cstr ? ReactorType::Cstr : ReactorType::Pfr;
    spec.heat = *r.heat;
    spec.bulk_density = r.bulk_density;
    spec.activity = r.activity;
    const ConversionBasis basis{c.key, r.F_key_fed};  // the key fed up to this stage
    // What the run and the record already know of the path (ReachHints):
    // its outlet, on the same path when the stage ran at constant
    // pressure, and the exact equilibrium end of one reaction.
    ReachHints known;
    if (r.volume && !(r.hydraulics && r.hydraulics->dP)) {
      known.V_from = r.volume;
      known.state_from = r.outlet;
    }
    if (r.equilibrium && mech.n_reactions() == 1) {
      known.X_eq_end = r.equilibrium->X_ad_eq;
      known.T_eq_end = r.equilibrium->T_ad_eq;
    }
    try {
      r.reach = r.kind == StageKind::Cstr
                    ? cstr_reach(mech, spec, r.inlet, basis, ws.cstr(), tank_options(options))
                    : pfr_reach(mech, spec, r.inlet, basis, ws.pfr(), options.solvers.tube, known);
    } catch (const std::exception& e) {
      result.warnings.push_back(
          fmt::format("stage {}: what it can reach at any size not computed: {}", r.id, e.what()));
      continue;
    }
    const StageReach& h = *r.reach;
    if (!h.peak_inside() || !h.V_at_X_max || !r.volume) continue;
    const char* what = r.kind == StageKind::Cstr ? "tank" : "bed";
    if (r.sized && *r.volume < *h.V_at_X_max)
      result.warnings.push_back(fmt::format(
          "stage {}: sized at the first point where X = {:.4f}; a larger {} raises X only up to "
          "{:.4f} at V = {:.4g} m3, and beyond that gives conversion back, towards X = {:.4f}",
          r.id, r.conversion, what, h.X_max, *h.V_at_X_max, h.X_end));
    else if (*r.volume > *h.V_at_X_max * (1 + 1e-6))
      result.warnings.push_back(fmt::format(
          "stage {}: this {} is past the most it can reach (X = {:.4f} at V = {:.4g} m3) and "
          "gives conversion back: a smaller {} would convert more",
          r.id, what, h.X_max, *h.V_at_X_max, what));
  }
}

}  // namespace

TrainWorkspace::TrainWorkspace()
    : ctx_(std::make_unique<SunContext>()),
      pfr_(std::make_unique<PfrWorkspace>(*ctx_)),
      cstr_(std::make_unique<CstrWorkspace>(*ctx_)),
      pfr_batch_(std::make_unique<PfrBatchWorkspace>(*ctx_)) {}
TrainWorkspace::~TrainWorkspace() = default;
TrainWorkspace::TrainWorkspace(TrainWorkspace&&) noexcept = default;
TrainWorkspace& TrainWorkspace::operator=(TrainWorkspace&&) noexcept = default;

TrainResult TrainResult::for_case(const Case& c) {
  TrainResult result;
  result.title = c.title;
  for (const auto& s : c.mechanism.species()) {
    result.species.push_back(s.id);
    if (s.mw) result.molar_mass.push_back(*s.mw);
  }
  if (result.molar_mass.size() != result.species.size()) result.molar_mass.clear();
  result.key = c.mechanism.species()[c.key].id;
  for (const auto& rx : c.mechanism.reactions()) result.reactions.push_back(rx.id);
  result.stoichiometry = Stoichiometry::of(c.mechanism.reactions());
  result.feed = c.feed;
  result.warnings = c.warnings;
  return result;
}

TrainResult run_train(const Case& c, const TrainOptions& options) {
  TrainWorkspace ws;  // one per run, shared by every tubular stage
  return run_train(c, options, ws);
}

TrainResult run_train(const Case& c, const TrainOptions& options, TrainWorkspace& ws) {
  if (c.interchanger()) return run_loop_train(c, options, ws);
  const Mechanism& mech = c.mechanism;
  const ConversionBasis basis = c.conversion_basis();

  TrainResult result = TrainResult::for_case(c);

  // Quench shares bypass the first stage: it gets the rest of the feed.
  // The conversion's basis is the key fed so far (docs/case-format.md,
  // "Cold-shot quench"): the first stage's feed, then each side stream's
  // key added as it joins.
  Stream stream = c.feed;
  const double rest = 1 - c.quench_shares();
  for (auto& f : stream.F) f *= rest;
  ConversionBasis fed{basis.key, stream.F[basis.key]};
  CstrOptions tank = tank_options(options);
  for (const auto& spec : c.train) {
    // A stirred tank starts from its warm starts, if any.
    tank.guesses = {};
    for (const auto& w : options.warm_starts)
      if (w.stage == stage_id(spec)) tank.guesses = w.states;
    const StageContext ctx{mech, fed, ws.pfr(), ws.cstr(), options.solvers.tube, tank, &c.feed};
    StageResult r = run_stage(spec, stream, ctx);
    if (r.side_stream) fed.F_key_feed += r.side_stream->F[basis.key];
    r.F_key_fed = fed.F_key_feed;
    if (!c.space_velocity_basis.empty()) add_space_velocities(mech, r, c.space_velocity_basis);
    for (const auto& w : r.warnings) result.warnings.push_back(w);
    stream = r.outlet;
    result.stages.push_back(std::move(r));
  }
  result.outlet = stream;
  result.conversion = fed.conversion(stream);
  result.limit_check = check_limits(c, options, result.stages);
  add_product_yields(c, result);
  if (options.equilibrium_views) add_equilibrium_views(c, options, result, ws);
  return result;
}

LimitCheck check_limits(const Case& c, const TrainOptions& options,
                        std::span<const StageResult> stages) {
  LimitCheckOptions o = options.limit_check;
  o.locate = o.locate && options.solvers.tube.full_profile;
  return check_temperature_limits(c.limits, stages, o);
}

void set_warm_starts(const TrainResult& result, std::vector<CstrWarmStart>& warm_starts) {
  std::size_t k = 0;
  for (const auto& r : result.stages) {
    if (r.kind != StageKind::Cstr) continue;
    if (k == warm_starts.size()) warm_starts.emplace_back();
    warm_starts[k].stage = r.id;
    warm_starts[k].states = r.steady_states;
    ++k;
  }
  warm_starts.resize(k);
}

void add_equilibrium_views(const Case& c, const TrainOptions& options, TrainResult& result) {
  TrainWorkspace ws;
  add_equilibrium_views(c, options, result, ws);
}

void add_equilibrium_views(const Case& c, const TrainOptions& options, TrainResult& result,
                           TrainWorkspace& ws) {
  add_equilibrium_records(c, options, result);
  add_reaches(c, options, result, ws);
  if (options.view_curves)
    result.levenspiel = levenspiel_curves(c.mechanism, c.key, c.feed.F[c.key], result.stages);
}

}  // namespace rxtrain
