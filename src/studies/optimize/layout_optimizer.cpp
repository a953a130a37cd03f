#include "layout_optimizer.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <nlopt.hpp>
#include <stdexcept>

#include "rxtrain/base/error.hpp"

namespace rxtrain::detail {

namespace {

// Objective returned where a layout cannot be evaluated: far above any
// scaled total (which is about one), so every method backs away from it.
constexpr double kUnevaluable = 1e6;
// Tolerance NLopt gives the constraints (scaled units).
constexpr double kConstraintTolerance = 1e-10;

void bounds(const LayoutProblem& p, std::vector<double>& lb, std::vector<double>& ub) {
  lb.assign(p.n_variables(), 0.0);
  ub.assign(p.n_variables(), 1.0);
  for (int i = p.n_temperatures(); i < p.n_variables(); ++i) {
    lb[i] = p.s_min;
    ub[i] = p.s_max;
  }
}

// Objective, constraints and their gradients at one x,
// cached because NLopt asks for the objective and the constraints at the
// same point one after the other. Keeps the best feasible layout of every
// evaluation it makes.
class Evaluator {
 public:
  Evaluator(const LayoutProblem& p, const DesignOptions& o,
            const std::function<void(const DesignProgress&)>& progress)
      : p_(p), o_(o), progress_(progress), n_(p.n_variables()), m_(p.n_constraints()) {
    bounds(p, lb_, ub_);
  }

  int n() const { return n_; }
  int m() const { return m_; }
  long evaluations() const { return evaluations_; }
  long feasible_points() const { return feasible_points_; }
  void set_scale(double s) { scale_ = s; }
  void set_stage(int start, int starts) {
    start_ = start;
    starts_ = starts;
  }

  const std::optional<std::vector<double>>& best_x() const { return best_x_; }
  // The least-violation point when no feasible one has been seen.
  const std::vector<double>& least_violation_x() const { return least_x_; }

  double objective(const double* x, double* grad) {
    compute(x, grad != nullptr);
    if (grad) std::copy(grad_f_.begin(), grad_f_.end(), grad);
    return f_;
  }
  void constraints(double* result, const double* x, double* grad) {
    compute(x, grad != nullptr);
    std::copy(c_.begin(), c_.end(), result);
    if (grad) std::copy(grad_c_.begin(), grad_c_.end(), grad);
  }

 private:
  // Scaled objective and constraints at x; records the best layouts.
  void point(const std::vector<double>& x, double& f, std::vector<double>& c,
             LayoutGradient* gradient = nullptr) {
    const LayoutState s = evaluate_layout(p_, x, gradient);
    ++evaluations_;
    c = s.constraints;
    f = s.evaluable && std::isfinite(s.total) ? s.total / scale_ : kUnevaluable;
    // Finite-difference probes may step just outside the bounds; only
    // points inside them may be kept.
    bool inside = true;
    for (int i = 0; i < n_; ++i) inside = inside && x[i] >= lb_[i] && x[i] <= ub_[i];
    if (inside && s.evaluable && std::isfinite(s.total)) {
      const double v = s.violation();
      if (v <= o_.feasibility_tolerance) {
        ++feasible_points_;
        if (s.total < best_total_) {
          best_total_ = s.total;
          best_x_ = x;
        }
      }
      if (v < least_violation_) {
        least_violation_ = v;
        least_x_ = x;
      }
    }
    if (progress_ && evaluations_ % 100 == 0) {
      DesignProgress d;
      d.beds = p_.beds;
      d.start = start_;
      d.starts = starts_;
      d.evaluations = evaluations_;
      if (best_x_) d.best = best_total_;
      progress_(d);
    }
  }

  void compute(const double* x, bool need_grad) {
    const std::vector<double> xv(x, x + n_);
    if (have_ && xv == x_ && (have_grad_ || !need_grad)) return;
    if (!need_grad) {
      point(xv, f_, c_);
    } else {
      // The gradients are analytic (evaluate_layout's forward mode): one
      // evaluation instead of 2n for central differences.
      LayoutGradient g;
      point(xv, f_, c_, &g);
      grad_f_.resize(n_);
      for (int i = 0; i < n_; ++i) grad_f_[i] = g.total[i] / scale_;
      grad_c_ = g.constraints;
    }
    x_ = xv;
    have_ = true;
    have_grad_ = need_grad;
  }

  const LayoutProblem& p_;
  const DesignOptions& o_;
  const std::function<void(const DesignProgress&)>& progress_;
  int n_, m_;
  std::vector<double> lb_, ub_;
  double scale_ = 1;
  long evaluations_ = 0;
  long feasible_points_ = 0;
  int start_ = 0, starts_ = 0;
  bool have_ = false, have_grad_ = false;
  std::vector<double> x_;
  double f_ = 0;
  std::vector<double> c_, grad_f_, grad_c_;
  double best_total_ = std::numeric_limits<double>::infinity();
  std::optional<std::vector<double>> best_x_;
  double least_violation_ = std::numeric_limits<double>::infinity();
  std::vector<double> least_x_;
};

double nlopt_objective(unsigned, const double* x, double* grad, void* data) {
  return static_cast<Evaluator*>(data)->objective(x, grad);
}

void nlopt_constraints(unsigned, double* result, unsigned, const double* x, double* grad,
                       void* data) {
  static_cast<Evaluator*>(data)->constraints(result, x, grad);
}

// One local run from x (updated to where the method ended). Ending
// without convergence (round-off, evaluation limit) is normal near a
// flat optimum: the Evaluator has kept the best point either way.
void run_local(nlopt::algorithm algorithm, const LayoutProblem& p, Evaluator& ev,
               std::vector<double>& x, double ftol_rel, int max_evaluations) {
  std::vector<double> lb, ub;
  bounds(p, lb, ub);
  for (int i = 0; i < p.n_variables(); ++i) x[i] = std::clamp(x[i], lb[i], ub[i]);
  nlopt::opt opt(algorithm, p.n_variables());
  opt.set_lower_bounds(lb);
  opt.set_upper_bounds(ub);
  opt.set_min_objective(nlopt_objective, &ev);
  opt.add_inequality_mconstraint(nlopt_constraints, &ev,
                                 std::vector<double>(p.n_constraints(), kConstraintTolerance));
  opt.set_ftol_rel(ftol_rel);
  opt.set_xtol_abs(1e-12);
  opt.set_maxeval(max_evaluations);
  if (algorithm == nlopt::LN_COBYLA) opt.set_initial_step(0.05);
  double f = 0;
  try {
    opt.optimize(x, f);
  } catch (const nlopt::roundoff_limited&) {
  } catch (const nlopt::forced_stop&) {
    throw;
  } catch (const SolverError&) {
    throw;
  } catch (const std::runtime_error&) {
    // NLopt's generic failure (e.g. SLSQP's line search): keep what was found.
  }
}

std::vector<double> temperatures(const LayoutProblem& p, const std::vector<double>& x) {
  std::vector<double> T;
  for (int i = 0; i < p.n_temperatures(); ++i) T.push_back(p.T_lo + x[i] * (p.T_hi - p.T_lo));
  return T;
}

}  // namespace

double LayoutState::violation() const {
  double v = 0;
  for (double c : constraints) v = std::max(v, c);
  return v;
}

namespace {

// A layout evaluated bed by bed, in forward mode when derivatives are
// asked: with each quantity its derivatives in x (a Slope; empty when
// none are asked).
class LayoutWalk {
 public:
  using Slope = std::vector<double>;

  LayoutWalk(const LayoutProblem& p, const std::vector<double>& x, LayoutGradient* gradient)
      : p_(p),
        model_(*p.model),
        x_(x),
        g_(gradient),
        nv_(p.n_variables()),
        width_(p.T_hi - p.T_lo),
        is_(p.n_temperatures()),
        X_(p.X0),
        dX_(zero()),
        dTotal_(zero()) {
    st_.constraints.assign(p.n_constraints(), 0.0);
    if (g_) {
      g_->total.assign(nv_, 0.0);
      g_->constraints.assign(static_cast<std::size_t>(p.n_constraints()) * nv_, 0.0);
    }
  }

  // Bed n: its inlet temperature, equilibrium end, end, size and outlet.
  void bed(int n) {
    const bool fixed = n == 0 && p_.fixed_first;
    Slope dT = zero();
    if (!fixed && g_) dT[iz_] = width_;
    const double T = fixed ? p_.T_feed : p_.T_lo + x_[iz_++] * width_;
    const double X_e = model_.equilibrium_end(X_, T);
    Slope dX_e = zero();
    if (g_) {
      const auto e = model_.equilibrium_end_slopes(X_, T, X_e);
      axpy(dX_e, e.dX_in, dX_);
      axpy(dX_e, e.dT_in, dT);
    }
    Slope dX_b = dX_;
    const double X_b = bed_end(n, X_e, dX_e, dX_b);
    double W = 0;
    Slope dW = zero();
    if (X_e > X_ && g_) {
      const auto w = model_.size_slopes(X_, T, X_b, X_e);
      W = w.size;
      axpy(dW, w.dX_in, dX_);
      axpy(dW, w.dT_in, dT);
      axpy(dW, w.dX_out, dX_b);
    } else if (X_e > X_) {
      W = model_.size(X_, T, X_b, X_e);
    }
    const double T_out = model_.temperature(X_, T, X_b);
    Slope dT_out = zero();
    if (g_) {
      const auto l = model_.line_slopes(X_, T, X_b, T_out);
      axpy(dT_out, l.dT_dX_in, dX_);
      axpy(dT_out, l.dT_dT_in, dT);
      axpy(dT_out, l.dT_dX, dX_b);
    }
    // Its far end within the window; an inlet short of equilibrium.
    const double sign = p_.exothermic ? 1.0 : -1.0;
    Slope dc = zero();
    axpy(dc, sign / width_, dT_out);
    constraint(2 * n, (p_.exothermic ? T_out - p_.T_hi : p_.T_lo - T_out) / width_, dc);
    Slope dforward = dX_;
    axpy(dforward, -1.0, dX_e);
    constraint(2 * n + 1, X_ + 1e-9 - X_e, dforward);
    st_.T_in.push_back(T);
    st_.T_out.push_back(T_out);
    st_.X_in.push_back(X_);
    st_.X_out.push_back(X_b);
    st_.X_e.push_back(X_e);
    st_.size.push_back(W);
    st_.total += W;
    axpy(dTotal_, 1.0, dW);
    X_ = X_b;
    dX_ = std::move(dX_b);
  }

  // A bed's balance could not be solved: every constraint violated.
  void unevaluable() {
    st_.evaluable = false;
    std::fill(st_.constraints.begin(), st_.constraints.end(), 1.0);
  }

  LayoutState finish() {
    if (g_) {
      if (st_.evaluable && std::isfinite(st_.total))
        g_->total = dTotal_;
      else
        std::fill(g_->constraints.begin(), g_->constraints.end(), 0.0);
    }
    return std::move(st_);
  }

 private:
  Slope zero() const { return Slope(g_ ? nv_ : 0, 0.0); }
  // a += k b, element by element (both sized nv or both empty).
  static void axpy(Slope& a, double k, const Slope& b) {
    for (std::size_t i = 0; i < a.size(); ++i) a[i] += k * b[i];
  }
  void constraint(int row, double value, const Slope& d) {
    st_.constraints[row] = value;
    if (g_) std::copy(d.begin(), d.end(), g_->constraints.begin() + row * nv_);
  }

  // The conversion at which bed n ends (dX_b: its slope, entering as the
  // inlet's): the fraction s of the way to X_e, or, for the last bed, the
  // target when it can reach it (its own constraint says whether).
  double bed_end(int n, double X_e, const Slope& dX_e, Slope& dX_b) {
    const double span = X_e - X_;
    Slope dspan = dX_e;
    axpy(dspan, -1.0, dX_);
    if (n < p_.beds - 1) {
      const double s = x_[is_];
      double X_b = X_;
      if (span > 0) {
        X_b = X_ + s * span;
        axpy(dX_b, s, dspan);
        if (g_) dX_b[is_] += span;
      }
      ++is_;
      return X_b;
    }
    const double cap = X_ + p_.s_max * span;
    Slope dcap = dX_;
    axpy(dcap, p_.s_max, dspan);
    Slope dc = zero();
    axpy(dc, -1.0, dcap);
    constraint(2 * p_.beds, p_.target - cap, dc);
    const double X_b = std::max(X_, std::min(p_.target, cap));
    if (X_b == p_.target && p_.target > X_)
      dX_b = zero();
    else if (X_b == cap && cap > X_)
      dX_b = dcap;
    return X_b;
  }

  const LayoutProblem& p_;
  const AdiabaticBedModel& model_;
  const std::vector<double>& x_;
  LayoutGradient* g_;
  int nv_;
  double width_;
  int iz_ = 0, is_;  // the next temperature and fraction in x
  double X_;         // the next bed's inlet conversion
  Slope dX_, dTotal_;
  LayoutState st_;
};

}  // namespace

LayoutState evaluate_layout(const LayoutProblem& p, const std::vector<double>& x,
                            LayoutGradient* gradient) {
  LayoutWalk walk(p, x, gradient);
  try {
    for (int n = 0; n < p.beds; ++n) walk.bed(n);
  } catch (const SolverError&) {
    walk.unevaluable();
  }
  return walk.finish();
}

std::vector<double> start_vector(const LayoutProblem& p, const StartLayout& s) {
  std::vector<double> x(p.n_variables(), 0.5);
  const double width = p.T_hi - p.T_lo;
  int iz = 0, is = p.n_temperatures();
  double X = p.X0;
  for (int n = 0; n < p.beds; ++n) {
    double T = p.T_feed;
    if (!(n == 0 && p.fixed_first)) {
      T = std::clamp(s.T_in[n], p.T_lo, p.T_hi);
      x[iz++] = (T - p.T_lo) / width;
    }
    if (n == p.beds - 1) break;
    double X_e = X;
    try {
      X_e = p.model->equilibrium_end(X, T);
    } catch (const SolverError&) {
    }
    double frac = 0.5;
    if (X_e > X) frac = std::clamp((s.X_out[n] - X) / (X_e - X), 0.02, 0.95);
    x[is++] = std::clamp(frac, p.s_min, p.s_max);
    if (X_e > X) X += frac * (X_e - X);
  }
  return x;
}

LayoutSolution solve_layout(const LayoutProblem& p, const std::vector<StartLayout>& starts,
                            const DesignOptions& o,
                            const std::function<void(const DesignProgress&)>& progress) {
  LayoutSolution sol;
  if (p.n_variables() == 0) {
    // One bed fed at the feed temperature: nothing to choose (NLopt
    // refuses a problem without variables); the layout is what it is.
    sol.state = evaluate_layout(p, sol.x);
    sol.evaluations = 1;
    sol.feasible = sol.state.evaluable && std::isfinite(sol.state.total) &&
                   sol.state.violation() <= o.feasibility_tolerance;
    return sol;
  }
  Evaluator ev(p, o, progress);
  // Scale: the total of the first evaluable start.
  for (const auto& s : starts) {
    const LayoutState st = evaluate_layout(p, start_vector(p, s));
    if (st.evaluable && std::isfinite(st.total) && st.total > 0) {
      ev.set_scale(st.total);
      break;
    }
  }
  int k = 0;
  for (const auto& s : starts) {
    ev.set_stage(++k, static_cast<int>(starts.size()));
    std::vector<double> x = start_vector(p, s);
    const long feasible_before = ev.feasible_points();
    // Starts end loosely (1e-8); only the best is polished tightly.
    run_local(nlopt::LD_SLSQP, p, ev, x, 1e-8, o.max_evaluations);
    if (ev.feasible_points() == feasible_before) {
      // SLSQP found nothing feasible from here: COBYLA needs no gradient
      // and walks into the feasible set more surely; SLSQP then refines.
      std::vector<double> y = start_vector(p, s);
      run_local(nlopt::LN_COBYLA, p, ev, y, 1e-8, o.max_evaluations);
      run_local(nlopt::LD_SLSQP, p, ev, y, 1e-8, o.max_evaluations);
    }
    ++sol.starts;
  }

  // Polish the best until its inlet temperatures settle.
  if (ev.best_x()) {
    ev.set_stage(0, static_cast<int>(starts.size()));
    std::vector<double> x = *ev.best_x();
    for (int round = 1; round <= 8; ++round) {
      std::vector<double> y = x;
      run_local(nlopt::LD_SLSQP, p, ev, y, 1e-15, o.max_evaluations);
      const std::vector<double> next = *ev.best_x();
      ++sol.polish_rounds;
      const auto T0 = temperatures(p, x), T1 = temperatures(p, next);
      double moved = 0;
      for (std::size_t i = 0; i < T0.size(); ++i) moved = std::max(moved, std::abs(T1[i] - T0[i]));
      x = next;
      if (moved < o.T_settle) break;
    }
    sol.x = x;
    sol.feasible = true;
  } else {
    sol.x =
        ev.least_violation_x().empty() ? start_vector(p, starts.front()) : ev.least_violation_x();
  }
  sol.state = evaluate_layout(p, sol.x);
  sol.evaluations = ev.evaluations();
  return sol;
}

}  // namespace rxtrain::detail
