#include "rxtrain/solvers/newton.hpp"

#include <algorithm>
#include <cmath>

namespace rxtrain {

namespace {
double merit(const Eigen::VectorXd& f) { return 0.5 * f.squaredNorm(); }
bool finite(const Eigen::VectorXd& v) { return v.allFinite(); }
}  // namespace

NewtonResult solve_newton(const ResidualFunction& fn, Eigen::VectorXd& x,
                          const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                          const NewtonOptions& options) {
  NewtonWorkspace ws;
  return solve_newton(fn, x, lower, upper, options, ws);
}

NewtonResult solve_newton(const ResidualFunction& fn, Eigen::VectorXd& x,
                          const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                          const NewtonOptions& options, NewtonWorkspace& ws) {
  const Eigen::Index n = x.size();
  NewtonResult res;
  Eigen::VectorXd& f = ws.f;
  Eigen::VectorXd& f_trial = ws.f_trial;
  Eigen::VectorXd& x_trial = ws.x_trial;
  Eigen::VectorXd& dx = ws.dx;
  Eigen::VectorXd& bent = ws.bent;  // the step with only the offending components cut
  Eigen::MatrixXd& J = ws.J;
  f.resize(n);
  f_trial.resize(n);
  x_trial.resize(n);
  dx.resize(n);
  bent.resize(n);
  J.resize(n, n);
  fn(x, f, &J);
  if (!finite(f) || !J.allFinite()) {
    res.message = "residual or Jacobian not finite at the starting point";
    return res;
  }
  for (int it = 0; it < options.max_iterations; ++it) {
    res.iterations = it + 1;
    ws.lu.compute(J);
    dx.noalias() = ws.lu.solve(f);
    dx = -dx;  // exact: the same numbers as -lu.solve(f)
    if (!finite(dx)) {
      res.message = "singular Jacobian";
      res.residual_norm = f.lpNorm<Eigen::Infinity>();
      return res;
    }
    // Fraction to the boundary: the whole step scaled so that no component
    // passes `boundary_fraction` of its distance to a bound.
    double alpha_max = 1.0;
    bent = dx;
    for (Eigen::Index i = 0; i < n; ++i) {
      if (dx[i] < 0 && x[i] + dx[i] < lower[i]) {
        alpha_max = std::min(alpha_max, options.boundary_fraction * (x[i] - lower[i]) / -dx[i]);
        bent[i] = -options.boundary_fraction * (x[i] - lower[i]);
      } else if (dx[i] > 0 && x[i] + dx[i] > upper[i]) {
        alpha_max = std::min(alpha_max, options.boundary_fraction * (upper[i] - x[i]) / dx[i]);
        bent[i] = options.boundary_fraction * (upper[i] - x[i]);
      }
    }
    const double m0 = merit(f);
    // Backtracking from x + alpha0 d; true when a step was accepted (x_trial,
    // f_trial and step hold it).
    double step = 0;
    auto line_search = [&](const Eigen::VectorXd& d, double alpha0, bool armijo) {
      for (double alpha = alpha0; alpha >= options.min_damping; alpha *= 0.5) {
        x_trial = x + alpha * d;
        bool ok = true;
        try {
          fn(x_trial, f_trial, nullptr);
        } catch (...) {
          ok = false;  // e.g. a property out of its domain: shorten the step
        }
        if (!ok || !finite(f_trial)) continue;
        // Armijo with the Newton direction: d(merit) = -2 m0 per unit alpha.
        // The bent step is no Newton direction; it needs plain decrease.
        const bool decrease =
            armijo ? merit(f_trial) <= (1.0 - 1e-4 * alpha) * m0 : merit(f_trial) < m0;
        if (decrease) {
          step = (alpha * d).lpNorm<Eigen::Infinity>();
          return true;
        }
      }
      return false;
    };
    bool accepted = line_search(dx, alpha_max, true);
    // A component sitting near its bound with the Newton step pointing out
    // cuts the scaled step to nothing and would stall the others ("jamming");
    // then the bent step lets the free components move.
    if (!accepted && alpha_max < 1.0) accepted = line_search(bent, 1.0, false);
    if (!accepted) {
      res.message = "line search failed (no decrease of the residual)";
      res.residual_norm = f.lpNorm<Eigen::Infinity>();
      return res;
    }
    x = x_trial;
    fn(x, f, &J);
    res.residual_norm = f.lpNorm<Eigen::Infinity>();
    if (res.residual_norm <= options.residual_tolerance &&
        (step <= options.step_tolerance || res.residual_norm == 0)) {
      res.converged = true;
      return res;
    }
    // Residual at machine precision: further steps cannot improve it.
    if (res.residual_norm <= 1e-14) {
      res.converged = true;
      return res;
    }
  }
  res.message = "no convergence in " + std::to_string(options.max_iterations) + " iterations";
  return res;
}

}  // namespace rxtrain
