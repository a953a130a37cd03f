#include "rxtrain/analysis/stability.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/flowsheet/loop.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/models/tank_balances.hpp"
#include "rxtrain/solvers/newton.hpp"

namespace rxtrain {

namespace {

// The tank's steady balances as H(u, p) = 0 on scaled unknowns
// u = [F / Fs, T / Ts] and p = (value - lo) / (hi - lo); rows scaled as the
// tank stage scales them (flows by Fs, the energy row by the feed's heat
// capacity flow times its T). dH/dp by central differences of rebuilt
// tanks (any field may move the inlet, the rates or the spec).
class TankProblem {
 public:
  TankProblem(const Case& c, const CaseField& field, std::size_t index, const StabilityOptions& o)
      : work_(c), field_(field), index_(index), o_(o) {
    n_ = c.mechanism.n_species();
    Fs_ = c.feed.total_flow();
    Ts_ = c.feed.T;
    const double C = c.mechanism.heat_capacity_flow(c.feed.T, c.feed.F.data());
    const auto& spec = std::get<ReactorSpec>(c.train[index]);
    Es_ = spec.heat == HeatMode::Adiabatic ? (C > 0 ? C * c.feed.T : 1.0) : c.feed.T;
    g_.resize(n_ + 1);
    dg_.resize(n_ + 1, n_ + 2);
    gp_.resize(n_ + 1);
    gm_.resize(n_ + 1);
    F_.resize(n_);
  }

  int n() const { return n_; }
  double value(double p) const { return o_.lo + p * (o_.hi - o_.lo); }
  double scaled(double v) const { return (v - o_.lo) / (o_.hi - o_.lo); }
  double Fs() const { return Fs_; }
  double Ts() const { return Ts_; }

  // The tank at field value v: its inlet, spec, multipliers and balances.
  void setup(double v) {
    if (ready_ && v == at_) return;
    ready_ = false;
    const std::vector<CaseField> f{field_};
    const std::vector<double> x{v};
    set_case_fields(work_, f, x);
    if (index_ == 0) {
      inlet_ = work_.feed;
    } else {
      Case upstream = work_;
      upstream.train.resize(index_);
      TrainOptions to;
      to.solvers = o_.solvers;
      to.equilibrium_views = false;
      inlet_ = run_train(upstream, to).outlet;
    }
    spec_ = std::get<ReactorSpec>(work_.train[index_]);
    V_ = spec_.volume ? *spec_.volume : 0.0;
    beta_ = rate_multipliers(work_.mechanism, spec_);
    balances_.reset(work_.mechanism, beta_, spec_.heat, inlet_, spec_.tank_cooling);
    at_ = v;
    ready_ = true;
  }

  void eval(const Eigen::VectorXd& x, Eigen::VectorXd& H, Eigen::MatrixXd& J) {
    const double p = x[n_ + 1];
    for (int i = 0; i < n_; ++i) F_[i] = x[i] * Fs_;
    const double T = x[n_] * Ts_;
    if (!(T > 1.0) || !(T < 1e4)) throw SolverError("temperature out of range");
    // Central differences, one-sided where a side leaves the field's range
    // (the range may start on the field's bound, e.g. heat_capacity = 0).
    const double h = 1e-6;
    const double up = field_.contains(value(p + h)) ? h : 0.0;
    const double down = field_.contains(value(p - h)) ? h : 0.0;
    if (up + down == 0) throw SolverError("the field cannot move from here");
    setup(value(p + up));
    balances_.eval(F_.data(), T, V_, gp_, nullptr);
    setup(value(p - down));
    balances_.eval(F_.data(), T, V_, gm_, nullptr);
    setup(value(p));
    balances_.eval(F_.data(), T, V_, g_, &dg_);
    for (int r = 0; r <= n_; ++r) {
      const double s = r < n_ ? Fs_ : Es_;
      H[r] = g_[r] / s;
      for (int c = 0; c < n_; ++c) J(r, c) = dg_(r, c) / s * Fs_;
      J(r, n_) = dg_(r, n_) / s * Ts_;
      J(r, n_ + 1) = (gp_[r] - gm_[r]) / (up + down) / s;
    }
  }

  // The heat-generation and heat-removal curves of the tank at field value
  // v over [T_lo, T_hi]: the mole balances solved at each T (Newton from
  // the previous T's flows), the generation from them, the removal the
  // rest of the energy balance.
  std::vector<HeatCurvePoint> heat_curves(double v, double T_lo, double T_hi, int n_points) {
    setup(v);
    std::vector<HeatCurvePoint> out;
    if (spec_.heat != HeatMode::Adiabatic) return out;
    detail::CstrBalances iso;
    Stream at = inlet_;
    Eigen::VectorXd z(n_ + 1), lo(n_ + 1), up(n_ + 1);
    for (int i = 0; i < n_; ++i) {
      z[i] = std::max(inlet_.F[i], 1e-9 * Fs_) / Fs_;
      lo[i] = 0;
      up[i] = std::numeric_limits<double>::infinity();
    }
    lo[n_] = 0;
    up[n_] = std::numeric_limits<double>::infinity();
    NewtonWorkspace ws;
    for (int k = 0; k < n_points; ++k) {
      const double T = T_lo + (T_hi - T_lo) * k / (n_points - 1);
      at.T = T;
      iso.reset(work_.mechanism, beta_, HeatMode::Isothermal, at);
      z[n_] = 1.0;
      auto fn = [&](const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
        for (int i = 0; i < n_; ++i) F_[i] = x[i] * Fs_;
        iso.eval(F_.data(), x[n_] * T, V_, g_, J ? &dg_ : nullptr);
        for (int r = 0; r <= n_; ++r) {
          const double s = r < n_ ? Fs_ : T;
          f[r] = g_[r] / s;
          if (!J) continue;
          for (int c = 0; c < n_; ++c) (*J)(r, c) = dg_(r, c) / s * Fs_;
          (*J)(r, n_) = dg_(r, n_) / s * T;
        }
      };
      const NewtonResult nr = solve_newton(std::cref(fn), z, lo, up, NewtonOptions{}, ws);
      if (!nr.converged) continue;  // a gap in the drawn curve, not a wrong point
      for (int i = 0; i < n_; ++i) F_[i] = std::max(z[i] * Fs_, 0.0);
      HeatCurvePoint p;
      p.T = T;
      p.generation = -iso.duty(F_.data(), T, V_);
      balances_.eval(F_.data(), T, V_, g_, nullptr);
      p.removal = g_[n_] + p.generation;
      out.push_back(p);
    }
    return out;
  }

  // The point x as the study reports it, with its stability.
  // The conversion is the key's at this value of the field (a feed flow
  // or composition moves the key fed).
  StabilityPoint point(const Eigen::VectorXd& x) {
    setup(value(x[n_ + 1]));
    for (int i = 0; i < n_; ++i) F_[i] = std::max(x[i] * Fs_, 0.0);
    StabilityPoint pt;
    pt.value = value(x[n_ + 1]);
    pt.T = x[n_] * Ts_;
    pt.X = work_.conversion_basis().conversion(F_.data());
    pt.kind =
        tank_stability(balances_, F_.data(), pt.T, V_, spec_.heat_capacity.value_or(0.0)).kind;
    return pt;
  }

 private:
  Case work_;
  CaseField field_;
  std::size_t index_;
  const StabilityOptions& o_;
  int n_ = 0;
  double Fs_ = 1, Ts_ = 1, Es_ = 1;
  bool ready_ = false;
  double at_ = 0;
  Stream inlet_;
  ReactorSpec spec_;
  double V_ = 0;
  std::vector<double> beta_;
  detail::CstrBalances balances_;
  Eigen::VectorXd g_, gp_, gm_;
  Eigen::MatrixXd dg_;
  std::vector<double> F_;
};

// The reactor studied: the one named, else the first stirred tank, else
// the first tubular reactor.
std::size_t reactor_index(const Case& c, const std::string& id) {
  std::optional<std::size_t> first_tube;
  for (std::size_t k = 0; k < c.train.size(); ++k) {
    const auto* r = std::get_if<ReactorSpec>(&c.train[k]);
    if (!r) continue;
    if (!id.empty()) {
      if (r->id == id) return k;
      continue;
    }
    if (r->type == ReactorType::Cstr) return k;
    if (!first_tube) first_tube = k;
  }
  if (first_tube) return *first_tube;
  throw InputError({c.file, 0, 0},
                   id.empty() ? std::string("stability studies a reactor (type: cstr or pfr); the "
                                            "case has none")
                              : fmt::format("stability: the case has no reactor (type: cstr or "
                                            "pfr) with id {}",
                                            id));
}

// A tubular bed: the sensitivity of its peak temperature along the field.
StabilityResult tubular_stability(const Case& c, const CaseField& field, std::size_t index,
                                  const StabilityOptions& options) {
  const auto& spec = std::get<ReactorSpec>(c.train[index]);
  if (spec.heat == HeatMode::Isothermal && !spec.cooling)
    throw InputError(spec.where, fmt::format("stage {}: an isothermal tube's temperature is held; "
                                             "stability scans a bed whose temperature moves "
                                             "(adiabatic or cooled)",
                                             spec.id));
  if (field.spec && field.spec->owner == FieldOwner::Stage && field.index > static_cast<int>(index))
    throw InputError({c.file, 0, 0},
                     fmt::format("stability: {} belongs to a stage after {}, so it cannot move "
                                 "that stage's peak temperature",
                                 field.name, spec.id));
  StabilityResult out;
  out.stage = spec.id;
  out.tubular = true;
  out.param = field.name;
  out.unit = field.unit.to_string();
  out.lo = options.lo;
  out.hi = options.hi;
  out.base_value = field.get(c);
  SensitivityScan scan = sensitivity_scan(c, field, index, options.lo, options.hi,
                                          options.sensitivity, options.solvers, out.warnings);
  out.sensitivity = std::move(scan.points);
  out.critical = scan.critical;
  out.runs = scan.runs;
  out.points = static_cast<int>(out.sensitivity.size());
  return out;
}

// The steady states of the tank at field value v, from a cold run of the
// train up to it.
std::vector<SteadyState> states_at(const Case& c, const CaseField& field, std::size_t index,
                                   double v, const StabilityOptions& o) {
  Case w = c;
  const std::vector<CaseField> f{field};
  const std::vector<double> x{v};
  set_case_fields(w, f, x);
  w.train.resize(index + 1);
  w.target_conversion.reset();
  w.target_outlet.reset();
  TrainOptions to;
  to.solvers = o.solvers;
  to.equilibrium_views = false;
  return run_train(w, to).stages.back().steady_states;
}

// The turning points in order of value, and the hysteresis window when
// there is one ignition and one extinction.
void finish_turning_points(StabilityResult& out) {
  std::sort(out.turning_points.begin(), out.turning_points.end(),
            [](const TurningPoint& a, const TurningPoint& b) { return a.value < b.value; });
  const auto count = [&](TurningKind k) {
    return std::count_if(out.turning_points.begin(), out.turning_points.end(),
                         [&](const TurningPoint& t) { return t.kind == k; });
  };
  if (count(TurningKind::Ignition) == 1 && count(TurningKind::Extinction) == 1)
    out.hysteresis = std::pair{out.turning_points.front().value, out.turning_points.back().value};
}

// Adds a traced curve to `out`: its points with the refined folds among
// them (each fold a turning point, once however many traces meet it), cut
// into branches of one stability. `point` reads a state of the trace.
void add_trace(const ContinuationResult& r,
               const std::function<StabilityPoint(const Eigen::VectorXd&)>& point,
               const StabilityOptions& options, StabilityResult& out) {
  // The points in order with the refined folds among them.
  std::vector<StabilityPoint> curve;
  std::size_t next_fold = 0;
  for (std::size_t k = 0; k < r.points.size(); ++k) {
    curve.push_back(point(r.points[k].x));
    while (next_fold < r.folds.size() && r.fold_after[next_fold] == static_cast<int>(k)) {
      StabilityPoint f = point(r.folds[next_fold].x);
      // At the fold itself one eigenvalue is zero: it belongs to neither
      // side; drawn with the side it ends.
      f.kind = curve.back().kind;
      curve.push_back(f);
      // Ignition when the stable side lies below in T.
      const StabilityPoint before = curve[curve.size() - 2];
      const StabilityPoint after =
          point(k + 1 < r.points.size() ? r.points[k + 1].x : r.folds[next_fold].x);
      // The same fold met by two traces is one turning point.
      const bool seen = std::any_of(
          out.turning_points.begin(), out.turning_points.end(), [&](const TurningPoint& q) {
            return std::abs(q.value - f.value) <= 1e-9 * (options.hi - options.lo) &&
                   std::abs(q.T - f.T) <= 1e-6;
          });
      TurningPoint tp;
      tp.value = f.value;
      tp.T = f.T;
      tp.X = f.X;
      const bool stable_below = before.stable() != after.stable()
                                    ? (before.stable() ? before.T < after.T : after.T < before.T)
                                    : before.T < after.T;
      tp.kind = stable_below ? TurningKind::Ignition : TurningKind::Extinction;
      if (!seen) out.turning_points.push_back(tp);
      ++next_fold;
    }
  }
  out.points += static_cast<int>(curve.size());
  for (std::size_t k = 0; k < curve.size(); ++k) {
    if (out.branches.empty() || k == 0 || out.branches.back().stable != curve[k].stable()) {
      StabilityBranch b;
      b.stable = curve[k].stable();
      if (k > 0) b.points.push_back(curve[k - 1]);  // no gap in the drawn curve
      out.branches.push_back(std::move(b));
    }
    out.branches.back().points.push_back(curve[k]);
  }
}

// Where a branch starts: a steady state at one end of the range, and the
// way into the range.
struct BranchStart {
  Eigen::VectorXd x;
  int direction;
};

// Follows a branch from every start that no earlier branch ended on,
// adding each as a trace; a branch that cannot start or ends inside the
// range is a warning. `problem` reads the scaled state: value() of the
// parameter, Ts() of the temperature, point(); x[param] and x[temp] are
// where the parameter and the temperature stand in it.
template <class Problem>
void follow_branches(const std::vector<BranchStart>& starts, const BranchFunction& fn,
                     const ContinuationOptions& co, Problem& problem, Eigen::Index param,
                     Eigen::Index temp, const CaseField& field, const StabilityOptions& options,
                     StabilityResult& out) {
  std::vector<Eigen::VectorXd> ends;
  auto covered = [&](const Eigen::VectorXd& x) {
    for (const auto& e : ends)
      if ((e - x).lpNorm<Eigen::Infinity>() < 1e-6) return true;
    return false;
  };
  for (const auto& st : starts) {
    if (covered(st.x)) continue;
    ContinuationResult r = continue_branch(fn, st.x, st.direction, 0.0, 1.0, co);
    out.corrector_iterations += r.corrector_iterations;
    if (r.points.empty()) {
      out.warnings.push_back(fmt::format("a branch from {} = {:.6g} {} could not start: {}",
                                         field.name, problem.value(st.x[param]), out.unit,
                                         r.message));
      continue;
    }
    ends.push_back(st.x);
    ends.push_back(r.points.back().x);
    if (!r.left_range)
      out.warnings.push_back(fmt::format(
          "the branch from {} = {:.6g} {} ended inside the range at {} = {:.6g} {}, T = {:.2f} "
          "K: {}",
          field.name, problem.value(st.x[param]), out.unit, field.name,
          problem.value(r.points.back().x[param]), out.unit, r.points.back().x[temp] * problem.Ts(),
          r.message));
    add_trace(
        r, [&](const Eigen::VectorXd& x) { return problem.point(x); }, options, out);
  }
}

// A loop's steady states (flowsheet/loop.hpp) as H(u, p) = 0 on the
// scaled tear u = T / Ts (T the interchanger's cold outlet, Ts the feed's
// temperature) and p = (value - lo) / (hi - lo): H = (g(T) - T) / Ts, its
// derivatives by central differences of passes (any field may move any
// stage). The tubes run at rtol 1e-10 so that the differences hold their
// digits.
class LoopProblem {
 public:
  LoopProblem(const Case& c, const CaseField& field, const StabilityOptions& o)
      : work_(c), field_(field), o_(o) {
    Ts_ = c.feed.T;
    to_.solvers = o.solvers;
    to_.equilibrium_views = false;
    auto& cv = to_.solvers.tube.cvode;
    cv.rtol = std::min(cv.rtol, 1e-10);
  }
  double value(double p) const { return o_.lo + p * (o_.hi - o_.lo); }
  double scaled(double v) const { return (v - o_.lo) / (o_.hi - o_.lo); }
  double Ts() const { return Ts_; }
  const TrainOptions& train_options() const { return to_; }

  // One pass at tear T and field value v.
  LoopPass pass(double T, double v) {
    set(v);
    const LoopMap g(work_, to_, ws_);
    return g(T);
  }
  double F(double T, double v) { return pass(T, v).T_computed - T; }

  void eval(const Eigen::VectorXd& x, Eigen::VectorXd& H, Eigen::MatrixXd& J) {
    const double T = x[0] * Ts_, v = value(x[1]);
    H[0] = F(T, v) / Ts_;
    J(0, 0) = dF_dT(T, v);
    // dH/dp: central where both sides lie in the field's range, one-sided
    // (three points, also of order h^2) at its bound.
    const double h = 1e-5;
    const double vp = value(x[1] + h), vm = value(x[1] - h);
    double d = 0;
    if (field_.contains(vm) && field_.contains(vp)) {
      d = (F(T, vp) - F(T, vm)) / (2 * h);
    } else {
      const double s = field_.contains(vp) ? 1 : -1;
      d = s * (-3 * F(T, v) + 4 * F(T, value(x[1] + s * h)) - F(T, value(x[1] + 2 * s * h))) /
          (2 * h);
    }
    J(0, 1) = d / Ts_;
    set(v);
  }

  // The state's point: the gain is 1 + dF/dT. A loop has no eigenvalues
  // here; an unstable state is named `unstable` (kind Unstable).
  StabilityPoint point(const Eigen::VectorXd& x) {
    const double T = x[0] * Ts_, v = value(x[1]);
    StabilityPoint p;
    p.value = v;
    p.T = T;
    p.X = pass(T, v).conversion;
    p.kind = 1 + dF_dT(T, v) < 1 ? StabilityKind::Stable : StabilityKind::Unstable;
    return p;
  }

 private:
  // dF/dT by a central difference of 1e-2 K: wide enough that the passes'
  // integration error (about 1e-8 K) stays out of the slope.
  double dF_dT(double T, double v) {
    const double h = 1e-2;
    return (F(T + h, v) - F(T - h, v)) / (2 * h);
  }
  void set(double v) {
    if (ready_ && v == at_) return;
    const std::vector<CaseField> f{field_};
    const std::vector<double> x{v};
    set_case_fields(work_, f, x);
    at_ = v;
    ready_ = true;
  }
  Case work_;
  CaseField field_;
  const StabilityOptions& o_;
  TrainOptions to_;
  TrainWorkspace ws_;
  double Ts_ = 0, at_ = 0;
  bool ready_ = false;
};

// The loop's branches of steady states along the field, from every state
// at both ends of the range (solve_loop's scan there).
StabilityResult loop_stability(const Case& c, const CaseField& field,
                               const StabilityOptions& options) {
  StabilityResult out;
  out.stage = c.interchanger()->id;
  out.loop = true;
  out.param = field.name;
  out.unit = field.unit.to_string();
  out.lo = options.lo;
  out.hi = options.hi;
  out.base_value = field.get(c);
  LoopProblem loop(c, field, options);
  const BranchFunction fn = [&](const Eigen::VectorXd& x, Eigen::VectorXd& H, Eigen::MatrixXd& J) {
    loop.eval(x, H, J);
  };
  ContinuationOptions co = options.continuation;
  // The residual is a difference of integrated passes: good to about
  // 1e-9 of T, not to the tank's 1e-11.
  co.tolerance = std::max(co.tolerance, 1e-9);
  co.fold_tolerance = std::max(co.fold_tolerance, 1e-11);
  std::vector<BranchStart> starts;
  for (const double end : {options.lo, options.hi}) {
    Case w = c;
    const std::vector<CaseField> f{field};
    const std::vector<double> v{end};
    set_case_fields(w, f, v);
    TrainWorkspace ws;
    const LoopMap g(w, loop.train_options(), ws);
    for (const auto& s : solve_loop(g, loop.train_options().loop).states) {
      Eigen::VectorXd x(2);
      x[0] = s.T_cold_out / loop.Ts();
      x[1] = loop.scaled(end);
      starts.push_back({x, end == options.lo ? +1 : -1});
    }
  }
  follow_branches(starts, fn, co, loop, 1, 0, field, options, out);
  finish_turning_points(out);
  return out;
}

}  // namespace

StabilityResult run_stability(const Case& c, const CaseField& field,
                              const StabilityOptions& options) {
  if (!(options.lo < options.hi) || !std::isfinite(options.lo) || !std::isfinite(options.hi))
    throw InputError({c.file, 0, 0},
                     fmt::format("stability: the range of {} must go from a lower to a higher "
                                 "value, got {:g} to {:g} (SI)",
                                 field.name, options.lo, options.hi));
  if (c.interchanger()) return loop_stability(c, field, options);
  const std::size_t index = reactor_index(c, options.stage);
  const auto& spec = std::get<ReactorSpec>(c.train[index]);
  const bool tube = spec.type == ReactorType::Pfr;
  if (spec.sized() || !spec.volume)
    throw InputError(spec.where, fmt::format("stage {}: stability follows a {} of given volume (or "
                                             "catalyst); this one is sized to a target",
                                             spec.id, tube ? "bed" : "tank"));
  if (tube) return tubular_stability(c, field, index, options);
  StabilityResult out;
  out.stage = spec.id;
  out.param = field.name;
  out.unit = field.unit.to_string();
  out.lo = options.lo;
  out.hi = options.hi;
  out.base_value = field.get(c);
  TankProblem tank(c, field, index, options);
  const int n = tank.n();
  const BranchFunction fn = [&](const Eigen::VectorXd& x, Eigen::VectorXd& H, Eigen::MatrixXd& J) {
    tank.eval(x, H, J);
  };

  // Every steady state at each end starts a trace unless a trace already
  // ended on it.
  std::vector<BranchStart> starts;
  for (const double end : {options.lo, options.hi}) {
    for (const auto& s : states_at(c, field, index, end, options)) {
      Eigen::VectorXd x(n + 2);
      for (int i = 0; i < n; ++i) x[i] = s.F[i] / tank.Fs();
      x[n] = s.T / tank.Ts();
      x[n + 1] = tank.scaled(end);
      starts.push_back({x, end == options.lo ? +1 : -1});
    }
  }
  if (starts.empty())
    throw SolverError(fmt::format("{}: no steady state found at either end of the range of {}",
                                  spec.id, field.name));
  follow_branches(starts, fn, options.continuation, tank, n + 1, n, field, options, out);
  double T_lo = std::numeric_limits<double>::infinity(), T_hi = -T_lo;
  for (const auto& b : out.branches)
    for (const auto& p : b.points) {
      T_lo = std::min(T_lo, p.T);
      T_hi = std::max(T_hi, p.T);
    }
  if (T_lo < T_hi) {
    const double margin = 0.1 * (T_hi - T_lo);
    out.heat_curves =
        tank.heat_curves(out.base_value, std::max(T_lo - margin, 2.0), T_hi + margin, 101);
  }
  finish_turning_points(out);
  return out;
}

std::vector<std::string> flip_warnings(const Case& c, const TrainResult& result, double margin) {
  std::vector<std::string> out;
  if (!(margin > 0)) return out;
  CaseField feed_T;
  for (const auto& f : case_fields(c))
    if (f.name == "feed.T") feed_T = f;
  for (std::size_t k = 0; k < result.stages.size() && k < c.train.size(); ++k) {
    const StageResult& r = result.stages[k];
    if (r.kind != StageKind::Cstr || r.heat != HeatMode::Adiabatic || !r.volume) continue;
    // The tank as it ran: a sized one at the volume found.
    Case w = c;
    auto& spec = std::get<ReactorSpec>(w.train[k]);
    spec.volume = *r.volume;
    spec.catalyst_mass.reset();
    spec.target_conversion.reset();
    spec.target_outlet.reset();
    StabilityOptions o;
    o.stage = r.id;
    o.lo = std::max(c.feed.T - margin, 1.0);
    o.hi = c.feed.T + margin;
    try {
      const StabilityResult s = run_stability(w, feed_T, o);
      for (const auto& t : s.turning_points)
        out.push_back(fmt::format(
            "stage {}: a feed temperature {:.2f} K {} the case's ({:.2f} °C) {} the tank "
            "({} point at {:.2f} °C feed, tank at {:.2f} °C): the design sits within {:g} K of "
            "a flip",
            r.id, std::abs(t.value - c.feed.T), t.value > c.feed.T ? "above" : "below",
            c.feed.T - kZeroCelsius, t.kind == TurningKind::Ignition ? "ignites" : "extinguishes",
            t.kind == TurningKind::Ignition ? "ignition" : "extinction", t.value - kZeroCelsius,
            t.T - kZeroCelsius, margin));
    } catch (const std::exception& e) {
      out.push_back(
          fmt::format("stage {}: its ignition and extinction points within {:g} K of "
                      "the feed temperature were not checked ({})",
                      r.id, margin, e.what()));
    }
  }
  return out;
}

}  // namespace rxtrain
