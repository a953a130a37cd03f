#include "rxtrain/studies/cooling_options.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "rxtrain/base/error.hpp"
#include "rxtrain/models/energy_balance.hpp"
#include "rxtrain/models/heat_exchange.hpp"
#include "rxtrain/solvers/scalar_root.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "rxtrain/stages/quench.hpp"
#include "rxtrain/studies/bed_layout.hpp"
#include "rxtrain/studies/optimize.hpp"

namespace rxtrain {

namespace {

// Without T_in_min, the coolant scan starts this far below the feed
// (common practice, no source: a coolant much colder quenches the bed).
constexpr double kCoolantBelowFeed = 100;
// The cooled option's refinement stops at this coolant temperature
// interval, K: far below the 0.01 K the tables show.
constexpr double kCoolantTol = 1e-3;
// A cooled trial counts as below T_max when its peak stays this far below
// it: the tables' resolution, so that a design on the edge of the limit
// never shows a peak of T_max itself.
constexpr double kPeakClearance = 0.01;  // K

const ReactorSpec& first_reactor(const Case& c) {
  for (const auto& sp : c.train)
    if (const auto* r = std::get_if<ReactorSpec>(&sp)) return *r;
  throw std::logic_error("check_layout_case lets no train without a reactor through");
}

// Totals of a train's reactors: catalyst (when every reactor has one),
// volume and the hottest point.
void add_reactor_totals(const TrainResult& t, CoolingOption& o) {
  double W = 0, V = 0, peak = -std::numeric_limits<double>::infinity();
  bool all_mass = true;
  int beds = 0;
  for (const auto& s : t.stages) {
    if (!is_reactor(s.kind)) continue;
    ++beds;
    V += s.volume.value_or(0.0);
    if (s.catalyst_mass)
      W += *s.catalyst_mass;
    else
      all_mass = false;
    peak = std::max(peak, s.T_max);
  }
  if (beds == 0) return;
  o.volume = V;
  if (all_mass) o.catalyst_mass = W;
  o.T_peak = peak;
  o.conversion = t.conversion;
}

void set_margin(const Case& c, CoolingOption& o) {
  if (c.limits.T_max && o.T_peak) o.margin_to_T_max = *c.limits.T_max - *o.T_peak;
}

// ---- 1. intercooled: staging's bed count, optimize's layout ---------------

// The coolers' areas, with the U and utility the case gives an exchanger
// (the first that gives both).
void size_coolers(const Case& c, const std::vector<Interstage>& coolers, CoolingOption& o) {
  o.sized_like.clear();
  o.utility_cross = false;
  o.area.reset();
  for (const auto& sp : c.train) {
    const auto* x = std::get_if<ExchangerSpec>(&sp);
    if (!x || !x->U || !x->utility) continue;
    o.sized_like = x->id;
    double area = 0;
    for (const auto& k : coolers) {
      const auto size = size_exchanger(k.duty, *x->U, k.T_in, k.T_out, x->utility->T_in,
                                       x->utility->T_out, x->utility->cp);
      if (!size) {
        o.utility_cross = true;
        break;
      }
      area += size->area;
    }
    if (!o.utility_cross) o.area = area;
    break;
  }
}

double heat_removed_by(const std::vector<Interstage>& coolers) {
  double removed = 0;
  for (const auto& x : coolers) removed -= x.duty;
  return removed;
}

CoolingOption intercooled_option(const Case& c, const StagingResult& s) {
  CoolingOption o;
  o.kind = CoolingKind::Intercooled;
  o.feasible = s.target_reached;
  o.why = s.target_reached ? CoolingShortfall::None : CoolingShortfall::TargetMissed;
  o.beds = static_cast<int>(s.beds.size());
  o.train = s.staged_run;
  add_reactor_totals(o.train, o);
  o.heat_removed = heat_removed_by(s.coolers);
  o.conversion = s.staged_conversion;
  size_coolers(c, s.coolers, o);
  set_margin(c, o);
  return o;
}

// Replaces staging's layout by optimize's for the same number of beds when
// the optimizer applies and needs less; otherwise says why not.
void optimize_intercooled(const Case& c, const CoolingOptionsOptions& options, CoolingOption& o) {
  if (!o.feasible || !o.beds) return;
  const std::optional<double> policy = o.catalyst_mass ? o.catalyst_mass : o.volume;
  o.staging_total = policy;
  DesignOptions d;
  d.beds = *o.beds;
  d.compare = false;
  // The peak kept as clear of T_max as the cooled option's.
  d.margin = c.limits.T_max ? kPeakClearance : 0.0;
  d.equilibrium_views = true;  // the diagram's curve, as staging's run has it
  d.solvers = options.staging.solvers;
  DesignResult r;
  try {
    r = optimize_design(c, d);
  } catch (const InputError& e) {
    o.optimum_note = e.message();
    return;
  } catch (const SolverError& e) {
    o.optimum_note = e.what();
    return;
  }
  const double optimum =
      r.catalyst_objective ? r.best.total_catalyst.value_or(0.0) : r.best.total_volume;
  if (!r.best.feasible || r.check_disagrees || r.train.stages.empty()) {
    o.optimum_note = "the optimizer found no layout it could confirm by a run of the train";
    return;
  }
  if (policy && optimum >= *policy) {
    o.optimum_note = "the optimizer found no layout needing less than staging's";
    return;
  }
  o.optimized = true;
  o.train = r.train;
  o.catalyst_mass.reset();
  add_reactor_totals(o.train, o);
  // The coolers as the train ran them (the layout's own numbers come from
  // the optimizer's quadrature, a hair from the run): the exchangers after
  // the first bed; one before it conditions the feed.
  std::vector<Interstage> coolers;
  bool after_bed = false;
  for (const auto& st : o.train.stages) {
    if (st.kind == StageKind::Exchanger) {
      if (after_bed)
        coolers.push_back({st.id, st.inlet.T, st.outlet.T, st.duty});
      else
        o.feed_conditioning_duty += st.duty;
    }
    after_bed = after_bed || is_reactor(st.kind);
  }
  o.heat_removed = heat_removed_by(coolers);
  size_coolers(c, coolers, o);
  set_margin(c, o);
}

// ---- 2. quench: cold shots of fresh feed ----------------------------------

// The amount of fresh feed at T_q (as a multiple of the case's feed) that,
// mixed into `hot`, brings it to T_back; hot.T > T_back > T_q.
double shot_amount(const Mechanism& mech, const Stream& feed, const Stream& hot, double T_q,
                   double T_back) {
  QuenchSpec shot;
  shot.T = T_q;
  auto g = [&](double a) {
    shot.share = a;
    return mix_adiabatic(mech, hot, quench_side_stream(shot, feed)).T - T_back;
  };
  double hi = 1, g_hi = g(hi);
  // The mixed T falls towards T_q as the shot grows: doubling brackets it.
  for (int k = 0; k < 60 && g_hi > 0; ++k) g_hi = g(hi *= 2);
  if (g_hi > 0)
    throw SolverError(fmt::format(
        "quench option: no cold shot at {:.2f} K brings the stream back to {:.2f} K", T_q, T_back));
  return brent_root(g, 0.0, hi, hot.T - T_back, g_hi, 1e-13, 200).x;
}

// The quench converter's beds walked on the scale of a bed-1 flow equal to
// the whole feed (the beds' paths do not depend on the flow's scale): the
// conversion each bed ends at on the key fed so far, and each shot after a
// bed as a multiple of the feed.
struct QuenchWalk {
  std::vector<double> X_end;  // per bed
  std::vector<double> shots;  // per shot (X_end.size() - 1 of them, or as many)
  bool reached = false;
};

QuenchWalk walk_quench(const Case& c, const LayoutCase& lc, const CoolingOptionsOptions& o,
                       const SunContext& ctx) {
  const Mechanism& mech = c.mechanism;
  const StagingOptions& so = o.staging;
  ReactorSpec bed = bed_stage("B", lc.bulk_density, lc.activity, lc.bed_where);
  PfrOptions po = so.solvers.tube;
  po.full_profile = false;
  po.stop_temperature = c.limits.T_max;
  QuenchWalk w;
  Stream stream = c.feed;
  double fed_key = c.feed.F[c.key];
  for (int k = 1; k <= so.max_beds; ++k) {
    const ConversionBasis basis{c.key, fed_key};
    const double X = basis.conversion(stream);
    if (c.limits.T_max && stream.T >= *c.limits.T_max) break;
    const auto eq =
        adiabatic_equilibrium(mech, stream, HeatMode::Adiabatic, basis, {}, so.solvers.equilibrium);
    if (!eq || eq->X - X <= kBedNoProgress) break;
    bed.target_conversion = std::min(approach_end(X, eq->X, so.approach), lc.target);
    const StageResult r = run_pfr(mech, bed, stream, basis, ctx, po);
    w.X_end.push_back(r.conversion);
    if (r.conversion >= lc.target - kReachTolerance) {
      w.reached = true;
      break;
    }
    if (!(r.outlet.T > c.feed.T) || r.volume.value_or(0.0) <= 0) break;
    if (k == so.max_beds) break;
    const double a = shot_amount(mech, c.feed, r.outlet, *o.quench_T, c.feed.T);
    QuenchSpec shot;
    shot.share = a;
    shot.T = *o.quench_T;
    stream = mix_adiabatic(mech, r.outlet, quench_side_stream(shot, c.feed));
    fed_key += a * c.feed.F[c.key];
    w.shots.push_back(a);
  }
  return w;
}

// The first `beds` beds of the walk as a case: bed k sized to the
// conversion it ended at, each shot a share of the feed.
Case quench_case(const Case& c, const LayoutCase& lc, const QuenchWalk& w, int beds, double T_q,
                 std::vector<double>& shares) {
  double total = 1;  // the feed fed in all, as a multiple of bed 1's flow
  for (int k = 0; k + 1 < beds; ++k) total += w.shots[k];
  Case q = c;
  q.train.clear();
  shares.clear();
  for (int k = 0; k < beds; ++k) {
    if (k > 0) {
      QuenchSpec s;
      s.id = fmt::format("Q{}", k);
      s.share = w.shots[k - 1] / total;
      s.T = T_q;
      s.where = lc.bed_where;
      shares.push_back(*s.share);
      q.train.push_back(s);
    }
    ReactorSpec b =
        bed_stage(fmt::format("B{}", k + 1), lc.bulk_density, lc.activity, lc.bed_where);
    b.target_conversion = w.X_end[k];
    q.train.push_back(b);
  }
  return q;
}

CoolingOption quench_option(const Case& c, const LayoutCase& lc, const CoolingOptionsOptions& o,
                            const SunContext& ctx) {
  CoolingOption q;
  q.kind = CoolingKind::Quench;
  auto skip = [&](CoolingShortfall why) {
    q.skipped = true;
    q.why = why;
    return q;
  };
  if (!lc.exothermic) return skip(CoolingShortfall::Endothermic);
  if (!o.quench_T) return skip(CoolingShortfall::NoQuenchT);
  if (!(*o.quench_T < c.feed.T)) return skip(CoolingShortfall::QuenchNotColder);
  const QuenchWalk w = walk_quench(c, lc, o, ctx);
  if (w.X_end.empty()) return skip(CoolingShortfall::TargetMissed);
  // Reached: the beds that reach it; else the design that reaches most.
  const int beds =
      w.reached
          ? static_cast<int>(w.X_end.size())
          : static_cast<int>(std::max_element(w.X_end.begin(), w.X_end.end()) - w.X_end.begin()) +
                1;
  const Case qc = quench_case(c, lc, w, beds, *o.quench_T, q.shares);
  TrainOptions to;
  to.solvers = o.staging.solvers;
  to.equilibrium_views = false;
  q.train = run_train(qc, to);
  q.beds = beds;
  q.feasible = q.train.conversion >= lc.target - kReachTolerance;
  q.why = q.feasible ? CoolingShortfall::None : CoolingShortfall::TargetMissed;
  add_reactor_totals(q.train, q);
  // What the shots take up: each side stream warmed to the mixed stream's T.
  double removed = 0;
  for (const auto& s : q.train.stages)
    if (s.side_stream)
      removed += c.mechanism.sensible_enthalpy_flow(s.outlet.T, s.side_stream->F.data()) -
                 c.mechanism.sensible_enthalpy_flow(s.side_stream->T, s.side_stream->F.data());
  q.heat_removed = removed;
  set_margin(c, q);
  return q;
}

// ---- 3. cooled: one multitubular reactor, constant coolant ---------------

enum class Trial { Ok, PeakAbove, Unreached };
struct TrialResult {
  Trial kind = Trial::Unreached;
  double catalyst = 0;  // Ok: kg (or m3 without a bulk density)
};

// The cooled reactor sized to the target, run at one coolant temperature
// after another (each a trial, counted).
struct CoolantTrials {
  const Case& c;
  const LayoutCase& lc;
  ReactorSpec spec;
  PfrOptions po;
  const SunContext& ctx;
  int count = 0;

  TrialResult operator()(double Tc) {
    ++count;
    spec.cooling->T = Tc;
    TrialResult t;
    try {
      const StageResult r = run_pfr(c.mechanism, spec, c.feed, c.conversion_basis(), ctx, po);
      if (r.conversion < lc.target - kReachTolerance) {
        t.kind = Trial::PeakAbove;  // stopped where T reached the limit
      } else {
        t.kind = Trial::Ok;
        t.catalyst = r.catalyst_mass.value_or(r.volume.value_or(0.0));
      }
    } catch (const InfeasibleError&) {
      t.kind = Trial::Unreached;  // beyond the cooled path's reach at this coolant T
    }
    return t;
  }
};

// The cooled reactor: the case's first reactor's tubes and U, or the
// options'; empty (x says why) when neither gives all three.
std::optional<ReactorSpec> cooled_spec(const Case& c, const LayoutCase& lc,
                                       const CoolingOptionsOptions& o, CoolingOption& x) {
  const ReactorSpec& first = first_reactor(c);
  const bool case_tubes = first.geometry && first.geometry->tubes > 0;
  const int count = o.tubes.count > 0 ? o.tubes.count : case_tubes ? first.geometry->tubes : 0;
  const double d = o.tubes.diameter > 0 ? o.tubes.diameter
                   : case_tubes         ? first.geometry->diameter
                                        : 0.0;
  const double U = o.tubes.U > 0 ? o.tubes.U : first.cooling ? first.cooling->U : 0.0;
  x.tubes = count;
  x.tube_diameter = d;
  x.U = U;
  if (count <= 0 || !(d > 0) || !(U > 0)) return std::nullopt;
  ReactorSpec spec = bed_stage("R1", lc.bulk_density, lc.activity, lc.bed_where);
  // The voidage matters only with pellets (the pressure drop): the case's
  // own tubes keep theirs and their pellets; tubes given here run at
  // constant pressure.
  spec.geometry = BedGeometry{count, d, std::nullopt,
                              case_tubes ? first.geometry->void_fraction : 0.4, lc.bed_where};
  if (case_tubes) {
    spec.pellet = lc.pellet;
    spec.viscosity = lc.viscosity;
  }
  spec.cooling = CoolingSpec{U,
                             0.0,
                             CoolantFlow::Constant,
                             std::nullopt,
                             std::nullopt,
                             first.cooling ? first.cooling->where : lc.bed_where};
  spec.target_conversion = lc.target;
  return spec;
}

// The coolant temperature in [lo, hi] needing the least catalyst: a scan of
// n points, then around the best one the feasible interval (a neighbour
// that fails is bisected to the edge of what works: the peak reaching
// T_max on the hot side, the target's reach on either) and Brent's
// minimizer inside it. Empty when no scanned point works; `why` says what
// stopped them.
std::optional<double> least_catalyst_coolant(CoolantTrials& trial, double lo, double hi, int n,
                                             CoolingShortfall& why) {
  std::vector<double> Ts(n);
  std::vector<TrialResult> scan(n);
  int best = -1;
  bool any_peak_above = false;
  for (int k = 0; k < n; ++k) {
    Ts[k] = lo + (hi - lo) * k / (n - 1);
    scan[k] = trial(Ts[k]);
    any_peak_above = any_peak_above || scan[k].kind == Trial::PeakAbove;
    if (scan[k].kind == Trial::Ok && (best < 0 || scan[k].catalyst < scan[best].catalyst)) best = k;
  }
  if (best < 0) {
    why = any_peak_above ? CoolingShortfall::PeakAboveTMax : CoolingShortfall::TargetOutOfReach;
    return std::nullopt;
  }
  auto edge = [&](double ok, double bad) {
    for (int it = 0; it < 60 && std::abs(bad - ok) > kCoolantTol; ++it) {
      const double m = 0.5 * (ok + bad);
      (trial(m).kind == Trial::Ok ? ok : bad) = m;
    }
    return ok;
  };
  const double a = best == 0                          ? Ts[0]
                   : scan[best - 1].kind == Trial::Ok ? Ts[best - 1]
                                                      : edge(Ts[best], Ts[best - 1]);
  const double b = best == n - 1                      ? Ts[n - 1]
                   : scan[best + 1].kind == Trial::Ok ? Ts[best + 1]
                                                      : edge(Ts[best], Ts[best + 1]);
  // Inside [a, b] every trial reaches the target below T_max (the scan's
  // step is fine against the catalyst's curvature); the ends are tried on
  // their own, since Brent's minimizer never evaluates them.
  auto catalyst = [&](double Tc) {
    const TrialResult t = trial(Tc);
    return t.kind == Trial::Ok ? t.catalyst : std::numeric_limits<double>::max();
  };
  double T_best = Ts[best], W_best = scan[best].catalyst;
  for (const double T : {a, b, brent_minimize(catalyst, a, b, kCoolantTol, 100)}) {
    const double W = catalyst(T);
    if (W < W_best) T_best = T, W_best = W;
  }
  return T_best;
}

CoolingOption cooled_option(const Case& c, const LayoutCase& lc, const CoolingOptionsOptions& o,
                            const SunContext& ctx) {
  CoolingOption x;
  x.kind = CoolingKind::Cooled;
  auto skip = [&](CoolingShortfall why) {
    x.skipped = true;
    x.why = why;
    return x;
  };
  if (!lc.exothermic) return skip(CoolingShortfall::Endothermic);
  if (!c.limits.T_max) return skip(CoolingShortfall::NoTMax);
  std::optional<ReactorSpec> spec = cooled_spec(c, lc, o, x);
  if (!spec) return skip(CoolingShortfall::NoTubes);
  const double T_max = *c.limits.T_max;
  PfrOptions po = o.staging.solvers.tube;
  po.full_profile = false;
  po.stop_temperature = T_max - kPeakClearance;
  CoolantTrials trial{c, lc, *spec, po, ctx};
  x.coolant_T_lo = c.limits.T_in_min.value_or(c.feed.T - kCoolantBelowFeed);
  x.coolant_T_hi = T_max;
  const auto T_best = least_catalyst_coolant(trial, x.coolant_T_lo, x.coolant_T_hi,
                                             std::max(3, o.coolant_scan_points), x.why);
  x.trials = trial.count;
  if (!T_best) return x;  // computed, none works: infeasible, with why

  // The design at the best coolant temperature, with its full profile.
  spec->cooling->T = *T_best;
  StageResult r =
      run_pfr(c.mechanism, *spec, c.feed, c.conversion_basis(), ctx, o.staging.solvers.tube);
  r.F_key_fed = c.feed.F[c.key];
  x.train = TrainResult::for_case(c);
  x.train.warnings.clear();
  x.train.outlet = r.outlet;
  x.train.conversion = r.conversion;
  x.coolant_T = *T_best;
  x.heat_removed = -r.duty;
  if (r.coolant) x.area = r.coolant->area;
  x.train.warnings = r.warnings;
  x.train.stages.push_back(std::move(r));
  add_reactor_totals(x.train, x);
  if (x.train.stages.back().hot_spot) x.T_peak = x.train.stages.back().hot_spot->T;
  x.feasible = *x.T_peak < T_max && *x.conversion >= lc.target - kReachTolerance;
  x.why = x.feasible ? CoolingShortfall::None : CoolingShortfall::PeakAboveTMax;
  set_margin(c, x);
  return x;
}

int order_of(const CoolingOption& o) { return o.feasible ? 0 : o.skipped ? 2 : 1; }

}  // namespace

const char* cooling_kind_name(CoolingKind k) {
  switch (k) {
    case CoolingKind::Intercooled:
      return "intercooled";
    case CoolingKind::Quench:
      return "quench";
    case CoolingKind::Cooled:
      return "cooled";
  }
  return "";
}

std::string CoolingOptionsOptions::validate() const {
  if (auto e = staging.validate(); !e.empty()) return "staging." + e;
  if (quench_T && !(*quench_T > 0))
    return fmt::format("quench_T must be positive, got {:g}", *quench_T);
  if (tubes.count < 0 || tubes.diameter < 0 || tubes.U < 0)
    return "tubes: count, diameter and U must be positive (or 0: the case's)";
  if (coolant_scan_points < 3 || coolant_scan_points > 1000)
    return fmt::format("coolant_scan_points must lie between 3 and 1000, got {}",
                       coolant_scan_points);
  return {};
}

CoolingOptionsResult run_cooling_options(const Case& c, const CoolingOptionsOptions& options) {
  if (const auto e = options.validate(); !e.empty())
    throw std::invalid_argument("CoolingOptionsOptions: " + e);
  const LayoutCase lc = check_layout_case(c, LayoutStudy::Staging);
  CoolingOptionsResult res;
  res.title = c.title;
  res.key = lc.key;
  res.target = lc.target;
  res.limits = c.limits;
  res.feed_T = c.feed.T;
  res.quench_T = options.quench_T;
  res.approach = options.staging.approach;
  res.max_beds = options.staging.max_beds;
  res.warnings = c.warnings;

  StagingOptions so = options.staging;
  so.return_to = ReturnTo::Inlet;
  SunContext ctx;
  res.options.push_back(intercooled_option(c, run_staging(c, so)));
  optimize_intercooled(c, options, res.options.back());
  res.options.push_back(quench_option(c, lc, options, ctx));
  res.options.push_back(cooled_option(c, lc, options, ctx));
  // Each option's stage warnings, named by the option (stage ids repeat
  // between options).
  for (const auto& opt : res.options)
    for (const auto& w : opt.train.warnings)
      if (std::find(c.warnings.begin(), c.warnings.end(), w) == c.warnings.end())
        res.warnings.push_back(fmt::format("{}: {}", cooling_kind_name(opt.kind), w));
  // Stable: equal ranks keep the order intercooled, quench, cooled.
  std::stable_sort(res.options.begin(), res.options.end(),
                   [](const CoolingOption& a, const CoolingOption& b) {
                     if (order_of(a) != order_of(b)) return order_of(a) < order_of(b);
                     if (order_of(a) == 0)
                       return a.catalyst_mass.value_or(a.volume.value_or(0.0)) <
                              b.catalyst_mass.value_or(b.volume.value_or(0.0));
                     return false;
                   });
  return res;
}

}  // namespace rxtrain
