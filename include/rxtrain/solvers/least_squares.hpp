// Nonlinear least squares: minimize 1/2 sum_k r_k(x)^2 over x, optionally
// within bounds, by Ceres Solver's Levenberg-Marquardt trust region, with
// the Jacobian by central differences of the residuals (the residuals of a
// fit are whole reactor runs: no derivative code to differentiate).
// Whatever the caller weights (1/sigma) is already in r.
//
// Residuals are asked for in batches of points (the base point and its 2n
// perturbations of one Jacobian), so the caller can spread every run of
// every point of a batch over its threads.
#pragma once

#include <Eigen/Dense>
#include <functional>
#include <limits>
#include <span>
#include <string>
#include <vector>

namespace rxtrain {

struct LeastSquaresProblem {
  int n_params = 0;
  int n_residuals = 0;
  // Fills residuals[p] (n_residuals each) for every point points[p]
  // (n_params each). A point whose residuals cannot be had at all is
  // flagged ok[p] = 0; Ceres then rejects the step that led there.
  std::function<void(std::span<const std::vector<double>> points,
                     std::span<std::vector<double>> residuals, std::span<char> ok)>
      evaluate;
  // Per parameter; infinite: unbounded.
  std::vector<double> lower, upper;
  // The size of each parameter's ordinary changes, for the difference
  // step: h_i = step * max(|x_i|, typical_i). Empty: max(|x0_i|, 1).
  std::vector<double> typical;
};

struct LeastSquaresOptions {
  int max_iterations = 200;
  // Ceres' convergence tests (Solver::Options of the same names).
  double function_tolerance = 1e-15;
  double gradient_tolerance = 1e-15;
  double parameter_tolerance = 1e-12;
  // Relative central-difference step: about the cube root of the rounding
  // error of the residuals (1e-16 for closed forms; an ODE solved to rtol
  // 1e-10 calls for about 1e-4, see docs/fit.md).
  double step = 6e-6;
};

struct LeastSquaresResult {
  std::vector<double> x;
  std::vector<double> residuals;  // at x
  Eigen::MatrixXd jacobian;       // n_residuals x n_params at x
  double cost = 0;                // 1/2 sum r^2
  bool converged = false;         // Ceres' CONVERGENCE (not a hit iteration limit)
  int iterations = 0;
  std::string message;  // Ceres' account of how it ended
};

// Solves from x0 (inside the bounds). Throws SolverError when the
// residuals cannot be evaluated at x0.
LeastSquaresResult solve_least_squares(const LeastSquaresProblem& problem,
                                       std::span<const double> x0,
                                       const LeastSquaresOptions& options = {});

// (J^T J)^-1 by the SVD of J: the unscaled covariance of the estimate.
// rank: the numerical rank of J (singular values above n eps s_max); a
// rank below n_params leaves the covariance of the unidentified
// directions infinite, which the caller must say.
struct GaussNewtonCovariance {
  Eigen::MatrixXd cov;
  int rank = 0;
};
GaussNewtonCovariance gauss_newton_covariance(const Eigen::MatrixXd& jacobian);

// The Jacobian at x by central differences, as solve_least_squares takes it.
Eigen::MatrixXd central_jacobian(const LeastSquaresProblem& problem, std::span<const double> x,
                                 const std::vector<double>& typical, double step,
                                 std::vector<double>* residuals = nullptr);

}  // namespace rxtrain
