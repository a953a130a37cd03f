// Damped Newton's method for small dense nonlinear systems (Eigen), with
// simple bounds kept by a fraction-to-the-boundary rule and an Armijo
// backtracking line search on 0.5 |f|^2.
#pragma once

#include <Eigen/Core>
#include <Eigen/LU>
#include <functional>
#include <string>

namespace rxtrain {

struct NewtonOptions {
  // Iterations before giving up; a well-scaled reactor balance converges in
  // well under 30 from a sensible start.
  int max_iterations = 100;
  // Converged when max |f_i| <= residual_tolerance (residuals are scaled
  // by the caller to order one) ...
  double residual_tolerance = 1e-11;
  // ... and the last full step was below step_tolerance in max norm.
  double step_tolerance = 1e-10;
  // Smallest line-search factor tried before declaring a failed iteration.
  double min_damping = 1e-8;
  // Fraction of the distance to a bound a step may cover (interior rule).
  double boundary_fraction = 0.99;
};

struct NewtonResult {
  bool converged = false;
  int iterations = 0;
  double residual_norm = 0;  // max norm at the end
  std::string message;
};

// f(x) and, when J != nullptr, its Jacobian df/dx. May throw.
using ResidualFunction =
    std::function<void(const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J)>;

// The solver's vectors, Jacobian and LU factors, kept between solves of
// one size so that repeated solves allocate nothing (a change of size
// resizes them once). Reuse does not change results. One per thread.
struct NewtonWorkspace {
  Eigen::VectorXd f, f_trial, x_trial, dx, bent;
  Eigen::MatrixXd J;
  Eigen::PartialPivLU<Eigen::MatrixXd> lu;
};

// Solves f(x) = 0 from x (updated in place) with lower <= x <= upper.
NewtonResult solve_newton(const ResidualFunction& fn, Eigen::VectorXd& x,
                          const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                          const NewtonOptions& options = {});
// Same, with the buffers of `ws` (the results are the same).
NewtonResult solve_newton(const ResidualFunction& fn, Eigen::VectorXd& x,
                          const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                          const NewtonOptions& options, NewtonWorkspace& ws);

}  // namespace rxtrain
