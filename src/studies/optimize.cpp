#include "rxtrain/studies/optimize.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <set>
#include <stdexcept>

#include "optimize/adiabatic_bed.hpp"
#include "optimize/layout_optimizer.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/studies/staging.hpp"

namespace rxtrain {

namespace {

// A limit counts as active within this (K): the optimizer settles inlet
// temperatures to better than 1 mK, so 0.01 K tells a bound from a near miss.
constexpr double kActiveTolerance = 0.01;
// Condition (1) holds within this relative rate difference: at free
// optimums the residual measures below 1e-6 (tests/design_test.cpp).
constexpr double kRateTolerance = 1e-4;
// Step (K) of the central differences of a bed's size in its inlet
// temperature: the quadrature is smooth to round-off, so W'' is good to
// ~1e-9 relative.
constexpr double kInletStep = 0.05;

std::string celsius(double T) { return fmt::format("{:.2f} °C", T - kZeroCelsius); }

// The stage ids of the layouts: B1.., C1.. (H1.. heating), E0; each moved
// off any species or reaction id of the case by a suffix.
struct Ids {
  std::set<std::string> taken;
  std::string operator()(const std::string& base) const {
    std::string id = base;
    while (taken.count(id)) id += "_opt";
    return id;
  }
};

struct Setup {
  const Case& c;
  const Mechanism& mech;
  ConversionBasis basis;
  int j = 0;
  double target = 0;
  double T_lo = 0, T_hi = 0;
  bool exothermic = true;
  bool catalyst = true;
  std::optional<double> bulk_density;
  Ids ids;
  double margin = 0;
  // "T_max" or "T_max - 15 K": the window's ends as the messages name them.
  std::string hi_label, lo_label;
};

double T_opt_or(const Setup& s, const DesignOptions& o, double X, double fallback) {
  try {
    const auto p =
        max_rate_temperature(s.mech, s.c.feed, s.basis, X, s.T_lo, s.T_hi, o.solvers.equilibrium);
    if (p) return std::clamp(p->T, s.T_lo, s.T_hi);
  } catch (const std::exception&) {
    // A start is only a start: the fallback does.
  }
  return fallback;
}

std::vector<detail::StartLayout> starts_for(const Setup& s, const DesignOptions& o, int N,
                                            const std::vector<const StagingResult*>& staged) {
  const double X0 = s.basis.conversion(s.c.feed);
  std::vector<detail::StartLayout> out;
  auto split = [&](bool front) {
    std::vector<double> X;
    for (int n = 1; n <= N; ++n) {
      const double f = static_cast<double>(n) / N;
      X.push_back(X0 + (s.target - X0) * (front ? 1 - (1 - f) * (1 - f) : f));
    }
    return X;
  };
  auto at_T_opt = [&](const std::vector<double>& X_out) {
    detail::StartLayout l;
    l.X_out = X_out;
    double X = X0;
    for (int n = 0; n < N; ++n) {
      l.T_in.push_back(T_opt_or(s, o, X, 0.5 * (s.T_lo + s.T_hi)));
      X = X_out[n];
    }
    return l;
  };
  const auto equal = split(false), front = split(true);
  out.push_back(at_T_opt(equal));
  if (N > 1) out.push_back(at_T_opt(front));
  out.push_back({std::vector<double>(N, std::clamp(s.c.feed.T, s.T_lo, s.T_hi)), equal});
  out.push_back({std::vector<double>(N, 0.5 * (s.T_lo + s.T_hi)), equal});
  for (const StagingResult* r : staged) {
    if (!r || !r->target_reached || static_cast<int>(r->beds.size()) != N) continue;
    detail::StartLayout l;
    for (const auto& b : r->beds) {
      l.T_in.push_back(b.T_in);
      l.X_out.push_back(b.X_out);
    }
    out.push_back(std::move(l));
  }
  return out;
}

// What the best infeasible layout misses most (its largest constraint
// violation: 2n the far end of bed n, 2n+1 its equilibrium, 2N the target).
LayoutShortfall shortfall_of(const detail::LayoutProblem& p, const detail::LayoutState& st) {
  LayoutShortfall f;
  if (!st.evaluable) return f;
  int worst = 0;
  for (int k = 1; k < p.n_constraints(); ++k)
    if (st.constraints[k] > st.constraints[worst]) worst = k;
  f.bed = worst == 2 * p.beds ? p.beds - 1 : worst / 2;
  f.kind = worst == 2 * p.beds ? ShortfallKind::LastBedShort
           : worst % 2 == 0    ? ShortfallKind::PassesLimit
                               : ShortfallKind::BeyondEquilibrium;
  const int n = f.bed;
  f.T_in = st.T_in[n];
  f.X_in = st.X_in[n];
  f.T_out = st.T_out[n];
  f.X_reach = st.X_in[n] + p.s_max * (st.X_e[n] - st.X_in[n]);
  return f;
}

// The limits that hold the beds of a layout (within kActiveTolerance).
std::vector<ActiveLimit> active_limits(const Setup& s, const detail::LayoutProblem& p,
                                       const DesignLayout& l, const DesignOptions& o) {
  std::vector<ActiveLimit> a;
  for (int n = 0; n < p.beds; ++n) {
    const DesignBed& b = l.bed[n];
    if (n == 0 && p.fixed_first) {
      a.push_back({n, BedLimit::InletFixed});
    } else {
      if (b.T_in <= s.T_lo + kActiveTolerance) a.push_back({n, BedLimit::InletAtLow});
      if (b.T_in >= s.T_hi - kActiveTolerance) a.push_back({n, BedLimit::InletAtHigh});
    }
    if (s.exothermic && b.T_out >= s.T_hi - kActiveTolerance)
      a.push_back({n, BedLimit::FarEndAtHigh});
    if (!s.exothermic && b.T_out <= s.T_lo + kActiveTolerance)
      a.push_back({n, BedLimit::FarEndAtLow});
    if (n < p.beds - 1 && b.X_out >= b.X_in + o.s_max * (b.X_ad_eq - b.X_in) - 1e-9)
      a.push_back({n, BedLimit::AtEquilibriumEnd});
  }
  return a;
}

bool on_inlet(BedLimit k) {
  return k == BedLimit::InletAtLow || k == BedLimit::InletAtHigh || k == BedLimit::InletFixed;
}

ConditionState state_of(bool holds, const std::vector<ActiveLimit>& exempt_by) {
  if (holds) return ConditionState::Holds;
  return exempt_by.empty() ? ConditionState::Missed : ConditionState::Limited;
}

// The residuals of the optimality conditions (design.hpp) at a layout,
// and the active limits that exempt each: (1) across the exchanger after
// bed n, a limit at bed n's far end or equilibrium end, or at bed n+1's
// inlet; (2) of bed n, a limit at its inlet, far end or equilibrium end.
void conditions(const detail::AdiabaticBedModel& model, DesignLayout& l) {
  const int N = static_cast<int>(l.bed.size());
  for (int n = 0; n + 1 < N; ++n) {
    InterstageCondition c;
    c.after = n;
    c.X = l.bed[n].X_out;
    c.rate_before = l.bed[n].rate_out;
    c.rate_after = l.bed[n + 1].rate_in;
    c.residual = (c.rate_after - c.rate_before) / c.rate_before;
    for (const auto& a : l.active_constraints)
      if ((a.bed == n && !on_inlet(a.limit)) || (a.bed == n + 1 && on_inlet(a.limit)))
        c.exempt_by.push_back(a);
    c.state =
        state_of(std::isfinite(c.residual) && std::abs(c.residual) <= kRateTolerance, c.exempt_by);
    if (!std::isfinite(c.residual)) {
      c.residual = 0;
      c.state = ConditionState::NotComputed;
    }
    l.interstage.push_back(c);
  }
  for (int n = 0; n < N; ++n) {
    const DesignBed& b = l.bed[n];
    InletCondition c;
    c.bed = n;
    for (const auto& a : l.active_constraints)
      if (a.bed == n) c.exempt_by.push_back(a);
    // The bed's size at its conversions, fed at T: the cooler before it
    // takes up the change, so only this bed's size moves.
    auto size_at = [&](double T) {
      return model.size(b.X_in, T, b.X_out, model.equilibrium_end(b.X_in, T));
    };
    try {
      const double Wp = size_at(b.T_in + kInletStep), Wm = size_at(b.T_in - kInletStep);
      const double W0 = size_at(b.T_in);
      const double d1 = (Wp - Wm) / (2 * kInletStep);
      const double d2 = (Wp - 2 * W0 + Wm) / (kInletStep * kInletStep);
      if (!std::isfinite(d1) || !std::isfinite(d2)) throw SolverError("size not finite");
      c.dsize_dT = d1;
      if (d2 > 0) c.shift = -d1 / d2;
      c.state = state_of(c.shift && std::abs(*c.shift) <= kActiveTolerance, c.exempt_by);
    } catch (const SolverError&) {
      c.state = ConditionState::NotComputed;
    }
    l.inlets.push_back(c);
  }
}

DesignLayout make_layout(const Setup& s, const detail::AdiabaticBedModel& model,
                         const detail::LayoutProblem& p, const detail::LayoutSolution& sol,
                         const DesignOptions& o) {
  DesignLayout l;
  l.beds = p.beds;
  l.evaluations = sol.evaluations;
  l.starts = sol.starts;
  l.polish_rounds = sol.polish_rounds;
  l.feasible = sol.feasible;
  const auto& st = sol.state;
  if (!l.feasible || !st.evaluable) {
    l.feasible = false;
    l.shortfall = shortfall_of(p, st);
    return l;
  }
  const char* exchanger = s.exothermic ? "C" : "H";
  for (int n = 0; n < p.beds; ++n) {
    DesignBed b;
    b.id = s.ids(fmt::format("B{}", n + 1));
    b.T_in = st.T_in[n];
    b.T_out = st.T_out[n];
    b.T_max = std::max(b.T_in, b.T_out);
    b.T_min = std::min(b.T_in, b.T_out);
    b.X_in = st.X_in[n];
    b.X_out = st.X_out[n];
    b.X_ad_eq = st.X_e[n];
    if (s.catalyst) {
      b.catalyst_mass = st.size[n];
      b.volume = st.size[n] / *s.bulk_density;
    } else {
      b.volume = st.size[n];
    }
    b.rate_in = model.rate(b.X_in, b.T_in);
    b.rate_out = model.rate(b.X_out, b.T_out);
    l.bed.push_back(b);
    l.total_volume += b.volume;
    if (b.catalyst_mass) l.total_catalyst = l.total_catalyst.value_or(0.0) + *b.catalyst_mass;
    if (n > 0) {
      const DesignBed& a = l.bed[n - 1];
      Interstage x;
      x.id = s.ids(fmt::format("{}{}", exchanger, n));
      x.T_in = a.T_out;
      x.T_out = b.T_in;
      x.duty = model.enthalpy_flow(a.X_out, b.T_in) - model.enthalpy_flow(a.X_out, a.T_out);
      l.total_duty += x.duty;
      l.coolers.push_back(x);
    }
  }
  const double X0 = s.basis.conversion(s.c.feed);
  l.feed_conditioning.id = s.ids("E0");
  l.feed_conditioning.T_in = s.c.feed.T;
  l.feed_conditioning.T_out = l.bed.front().T_in;
  l.feed_conditioning.duty =
      model.enthalpy_flow(X0, l.bed.front().T_in) - model.enthalpy_flow(X0, s.c.feed.T);

  l.active_constraints = active_limits(s, p, l, o);
  conditions(model, l);
  return l;
}

// The case with another train, checked as a loaded case is (validate_case).
Case with_train(const Case& c, std::vector<StageSpec> train) {
  Case t = c;
  t.train = std::move(train);
  validate_case(t);
  return t;
}

AsWrittenDesign as_written(const Setup& s, const DesignOptions& o) {
  AsWrittenDesign a;
  TrainOptions to;
  to.solvers = o.solvers;
  to.equilibrium_views = false;
  to.limit_check = o.limit_check;
  TrainResult r;
  try {
    r = run_train(s.c, to);
  } catch (const InputError& e) {
    a.error = e.message();
    return a;
  } catch (const InfeasibleError& e) {
    a.error = e.message();
    return a;
  } catch (const SolverError& e) {
    a.error = e.what();
    return a;
  }
  a.ran = true;
  a.conversion = r.conversion;
  a.reaches_target = r.conversion >= s.target - kReachTolerance;
  bool all_mass = true;
  // Inside the window narrowed by a margin: the limits themselves are the
  // limit check's, so only a margin adds excursions.
  const bool narrowed = s.T_hi < *s.c.limits.T_max || s.T_lo > *s.c.limits.T_in_min;
  for (const auto& st : r.stages) {
    if (!is_reactor(st.kind)) {
      a.total_duty += st.duty;
      continue;
    }
    ++a.reactors;
    a.total_volume += st.volume.value_or(0.0);
    if (st.catalyst_mass)
      a.total_catalyst = a.total_catalyst.value_or(0.0) + *st.catalyst_mass;
    else
      all_mass = false;
    if (narrowed && st.T_max > s.T_hi + kActiveTolerance)
      a.outside_window.push_back({st.id, st.T_max, true});
    if (narrowed && st.T_min < s.T_lo - kActiveTolerance)
      a.outside_window.push_back({st.id, st.T_min, false});
  }
  a.limit_check = r.limit_check;
  a.within_limits =
      a.outside_window.empty() &&
      std::none_of(r.limit_check.findings.begin(), r.limit_check.findings.end(),
                   [](const LimitFinding& f) { return f.kind != LimitFindingKind::Near; });
  if (!all_mass) a.total_catalyst.reset();
  return a;
}

// The limits narrowed by the margin, and their names in messages.
struct Window {
  double T_lo = 0, T_hi = 0;
  std::string lo_label, hi_label;
};

Window window_of(const Case& c, const DesignOptions& o) {
  const double m = o.margin;
  Window w{*c.limits.T_in_min + m, *c.limits.T_max - m,
           m > 0 ? fmt::format("T_in_min + {:g} K", m) : "T_in_min",
           m > 0 ? fmt::format("T_max - {:g} K", m) : "T_max"};
  if (!(w.T_lo < w.T_hi))
    throw InputError(c.limits.where,
                     fmt::format("--margin {:g} K leaves no window: {} = {} is not below {} = {} "
                                 "(the limits are {:g} K apart; the margin is kept on both sides)",
                                 m, w.lo_label, celsius(w.T_lo), w.hi_label, celsius(w.T_hi),
                                 *c.limits.T_max - *c.limits.T_in_min));
  if (o.fixed_feed_T && (c.feed.T < w.T_lo || c.feed.T > w.T_hi))
    throw InputError(
        c.limits.where,
        fmt::format("--fixed-feed-T: the feed at {} lies outside the window "
                    "[{}, {}] = [{}, {}] that bed 1's inlet must keep",
                    celsius(c.feed.T), w.lo_label, w.hi_label, celsius(w.T_lo), celsius(w.T_hi)));
  return w;
}

StagingDesign staging_of(const StagingResult& r) {
  StagingDesign d;
  d.reached = r.target_reached;
  d.result = r;
  d.beds = r.target_reached ? r.beds_needed : static_cast<int>(r.beds.size());
  bool all_mass = true;
  for (const auto& b : r.beds) {
    d.total_volume += b.volume;
    if (b.catalyst_mass)
      d.total_catalyst = d.total_catalyst.value_or(0.0) + *b.catalyst_mass;
    else
      all_mass = false;
  }
  if (!all_mass) d.total_catalyst.reset();
  return d;
}

}  // namespace

std::string DesignOptions::validate() const {
  if (beds && max_beds) return "beds and max_beds exclude each other";
  if (beds && (*beds < 1 || *beds > 20))
    return fmt::format("beds must lie between 1 and 20, got {}", *beds);
  if (max_beds && (*max_beds < 1 || *max_beds > 20))
    return fmt::format("max_beds must lie between 1 and 20, got {}", *max_beds);
  if (quadrature_panels < 1 || quadrature_nodes < 2 || quadrature_nodes > 64)
    return "quadrature_panels must be >= 1 and quadrature_nodes between 2 and 64";
  if (!(s_min > 0 && s_min < s_max && s_max < 1)) return "need 0 < s_min < s_max < 1";
  if (!(T_settle > 0)) return "T_settle must be positive";
  if (max_evaluations < 10) return "max_evaluations must be at least 10";
  if (!(feasibility_tolerance > 0)) return "feasibility_tolerance must be positive";
  if (auto e = limit_check.validate(); !e.empty()) return "limit_check: " + e;
  if (!(margin >= 0 && std::isfinite(margin))) return "margin must be finite and not negative";
  if (auto e = solvers.validate(); !e.empty()) return "solvers." + e;
  return {};
}

std::string shortfall_message(const DesignResult& d, const LayoutShortfall& f) {
  const int bed = f.bed + 1;
  const auto label = [&](bool high) {
    return d.margin > 0 ? fmt::format("{} {} {:g} K", high ? "T_max" : "T_in_min", high ? "-" : "+",
                                      d.margin)
                        : std::string(high ? "T_max" : "T_in_min");
  };
  switch (f.kind) {
    case ShortfallKind::NotEvaluable:
      break;
    case ShortfallKind::LastBedShort:
      return fmt::format(
          "the best layout found still falls short: bed {} can reach at most X = {:.4f} (its "
          "adiabatic equilibrium, fed at {} and X = {:.4f}) while the target is {:.4f}",
          bed, f.X_reach, celsius(f.T_in), f.X_in, d.target);
    case ShortfallKind::PassesLimit:
      return fmt::format("the best layout found still {} {} = {}: bed {} ends at {}",
                         d.exothermic ? "passes" : "falls below", label(d.exothermic),
                         celsius(d.exothermic ? d.window_high : d.window_low), bed,
                         celsius(f.T_out));
    case ShortfallKind::BeyondEquilibrium:
      return fmt::format("the best layout found feeds bed {} beyond equilibrium ({} at X = {:.4f})",
                         bed, celsius(f.T_in), f.X_in);
  }
  return "no layout could be evaluated (the energy balance or the equilibrium of a bed has no "
         "solution)";
}

std::vector<StageSpec> design_train(const Case& c, const DesignResult& d,
                                    const DesignLayout& layout) {
  BedLayout l;
  if (!d.fixed_feed_T && layout.feed_conditioning.T_out != c.feed.T)
    l.feed_conditioning = layout.feed_conditioning;
  l.beds.assign(layout.bed.begin(), layout.bed.end());  // the Bed of each
  l.interstages = layout.coolers;
  l.bulk_density = d.bulk_density;
  l.activity = d.activity;
  l.by_mass = d.catalyst_objective;
  return layout_stages(l, {c.file, 0, 0});
}

namespace {

// The staging policy's answers (inlet and max-rate) in the optimum's
// window: a comparison and starts.
struct StagedStarts {
  std::optional<StagingResult> inlet, max_rate;
};

StagedStarts run_staging_policies(const Setup& s, const DesignOptions& options, DesignResult& res) {
  StagedStarts out;
  try {
    StagingOptions so;
    so.solvers = options.solvers;
    // The staging policy keeps the same window as the optimum.
    Case narrowed = s.c;
    narrowed.limits.T_in_min = s.T_lo;
    narrowed.limits.T_max = s.T_hi;
    validate_case(narrowed);
    out.inlet = run_staging(narrowed, so);
    so.return_to = ReturnTo::MaxRate;
    out.max_rate = run_staging(narrowed, so);
  } catch (const std::exception& e) {
    // A failure there (e.g. a target it cannot reach) takes nothing from
    // the optimum.
    res.warnings.push_back(fmt::format("the staging policy was not run: {}", e.what()));
  }
  return out;
}

// The best layout of every bed count in `counts`.
std::vector<DesignLayout> optimize_counts(const Setup& s, const detail::AdiabaticBedModel& model,
                                          const std::vector<int>& counts,
                                          const DesignOptions& options,
                                          const StagedStarts& staged) {
  std::vector<DesignLayout> layouts;
  for (int N : counts) {
    detail::LayoutProblem p;
    p.model = &model;
    p.beds = N;
    p.fixed_first = options.fixed_feed_T;
    p.T_feed = s.c.feed.T;
    p.X0 = s.basis.conversion(s.c.feed);
    p.target = s.target;
    p.T_lo = s.T_lo;
    p.T_hi = s.T_hi;
    p.exothermic = s.exothermic;
    p.s_min = options.s_min;
    p.s_max = options.s_max;
    const auto starts = starts_for(
        s, options, N,
        {staged.inlet ? &*staged.inlet : nullptr, staged.max_rate ? &*staged.max_rate : nullptr});
    const auto sol = detail::solve_layout(p, starts, options, options.progress);
    layouts.push_back(make_layout(s, model, p, sol, options));
  }
  return layouts;
}

// The least total among the feasible layouts (the fewest beds on a tie);
// null when none is feasible.
const DesignLayout* least_total(const std::vector<DesignLayout>& layouts, bool catalyst) {
  const DesignLayout* best = nullptr;
  for (const auto& l : layouts) {
    if (!l.feasible) continue;
    const double total = catalyst ? *l.total_catalyst : l.total_volume;
    const double best_total = best ? (catalyst ? *best->total_catalyst : best->total_volume) : 0.0;
    if (!best || total < best_total * (1 - 1e-9)) best = &l;
  }
  return best;
}

// The independent check: the optimum as a train, run by run_train.
void check_optimum(const Setup& s, const DesignOptions& options, DesignResult& res) {
  TrainOptions to;
  to.solvers = options.solvers;
  to.equilibrium_views = options.equilibrium_views;
  to.limit_check = options.limit_check;
  const Case trial = with_train(s.c, design_train(s.c, res, res.best));
  res.train = run_train(trial, to);
  res.best.checked_conversion = res.train.conversion;
  res.check_disagrees = std::abs(res.train.conversion - s.target) > 1e-5;
  res.limit_check = res.train.limit_check;
}

// The optimum's beds built as the case's first reactor is (its bed,
// pellet and the fluid's viscosity), run with their pressure drop. The
// sizes stay the constant-pressure optimum's, so the conversion this run
// reaches shows what the pressure drop costs.
void rerun_with_pressure_drop(const Setup& s, const LayoutCase& lc, const DesignOptions& options,
                              DesignResult& res) {
  std::vector<StageSpec> train = design_train(s.c, res, res.best);
  for (auto& st : train)
    if (auto* r = std::get_if<ReactorSpec>(&st)) {
      r->geometry = lc.geometry;
      r->pellet = lc.pellet;
      r->viscosity = lc.viscosity;
    }
  TrainOptions to;
  to.solvers = options.solvers;
  to.limit_check = options.limit_check;
  DesignResult::PressureDropRun run;
  try {
    run.train = run_train(with_train(s.c, std::move(train)), to);
  } catch (const SolverError& e) {
    run.error = e.what();
  }
  res.with_pressure_drop = std::move(run);
}

DesignResult result_for(const Setup& s, const DesignOptions& options) {
  const Case& c = s.c;
  DesignResult res;
  res.title = c.title;
  res.key = c.mechanism.species()[c.key].id;
  res.target = s.target;
  res.limits = c.limits;
  res.exothermic = s.exothermic;
  res.catalyst_objective = s.catalyst;
  res.feed_T = c.feed.T;
  res.feed_P = c.feed.P;
  res.bulk_density = s.bulk_density;
  res.fixed_feed_T = options.fixed_feed_T;
  res.margin = options.margin;
  res.window_low = s.T_lo;
  res.window_high = s.T_hi;
  res.warnings = c.warnings;
  // Worth seeing beside the optimum; the train's other design warnings
  // (rules of thumb on bed length and space time) are not: the optimum
  // sizes the beds itself.
  if (const auto dT = adiabatic_temperature_change(c))
    if (s.exothermic && c.feed.T + *dT > *c.limits.T_max) res.dT_ad_past_T_max = dT;
  return res;
}

}  // namespace

DesignResult optimize_design(const Case& c, const DesignOptions& options) {
  if (const auto e = options.validate(); !e.empty())
    throw std::invalid_argument("DesignOptions: " + e);
  const Mechanism& mech = c.mechanism;
  const LayoutCase lc = check_layout_case(c, LayoutStudy::Optimize);
  const Window w = window_of(c, options);
  Setup s{c,      mech,           c.conversion_basis(), lc.reaction,     lc.target,
          w.T_lo, w.T_hi,         lc.exothermic,        lc.per_catalyst, lc.bulk_density,
          Ids{},  options.margin, w.hi_label,           w.lo_label};
  for (const auto& sp : mech.species()) s.ids.taken.insert(sp.id);
  for (const auto& rx : mech.reactions()) s.ids.taken.insert(rx.id);

  DesignResult res = result_for(s, options);
  res.activity = lc.activity;
  if (!(s.target > s.basis.conversion(c.feed)))
    throw InputError(c.target_where, "the target conversion is not above the feed's");
  const StagedStarts staged =
      lc.has_reactor ? run_staging_policies(s, options, res) : StagedStarts{};

  const detail::AdiabaticBedModel model(mech, c.feed, s.basis, lc.reaction,
                                        options.quadrature_panels, options.quadrature_nodes,
                                        options.solvers.equilibrium, lc.activity);
  int reactors = 0;
  for (const auto& sp : c.train) reactors += std::holds_alternative<ReactorSpec>(sp) ? 1 : 0;
  std::vector<int> counts;
  if (options.max_beds)
    for (int n = 1; n <= *options.max_beds; ++n) counts.push_back(n);
  else
    counts.push_back(options.beds.value_or(std::max(reactors, 1)));

  const std::vector<DesignLayout> layouts = optimize_counts(s, model, counts, options, staged);
  const DesignLayout* best = least_total(layouts, s.catalyst);
  if (!best)
    throw InfeasibleError(
        c.target_where,
        fmt::format("no layout of {} reaches the target X = {:.4f} within [{}, {}] = "
                    "[{}, {}]: {}",
                    counts.size() == 1 ? fmt::format("{} adiabatic bed{}", counts.front(),
                                                     counts.front() == 1 ? "" : "s")
                                       : fmt::format("1 to {} adiabatic beds", counts.back()),
                    s.target, s.lo_label, s.hi_label, celsius(s.T_lo), celsius(s.T_hi),
                    shortfall_message(res, layouts.back().shortfall)),
        layouts.back().shortfall.kind == ShortfallKind::LastBedShort
            ? std::optional<double>(layouts.back().shortfall.X_reach)
            : std::nullopt,
        "conversion");
  res.best = *best;
  if (options.max_beds) res.by_bed_count = layouts;
  check_optimum(s, options, res);
  if (lc.geometry && lc.pellet && lc.viscosity) rerun_with_pressure_drop(s, lc, options, res);

  if (options.compare) {
    res.as_written = as_written(s, options);
    if (staged.inlet) res.staging = staging_of(*staged.inlet);
  }
  return res;
}

}  // namespace rxtrain
