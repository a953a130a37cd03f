#include "rxtrain/solvers/least_squares.hpp"

#include <ceres/ceres.h>
#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

namespace {

// Step of parameter i: inside the bounds on both sides where it can be
// (a one-sided difference where a bound is closer than the step).
struct Step {
  double minus = 0, plus = 0;
};

Step step_at(const LeastSquaresProblem& p, std::span<const double> x,
             const std::vector<double>& typical, double step, int i) {
  const double h = step * std::max(std::abs(x[i]), typical[i]);
  Step s{h, h};
  const double lo = p.lower.empty() ? -std::numeric_limits<double>::infinity() : p.lower[i];
  const double hi = p.upper.empty() ? std::numeric_limits<double>::infinity() : p.upper[i];
  if (x[i] + h > hi) s = {h, 0};
  if (x[i] - h < lo) s = {0, h};
  return s;
}

// The residuals and Jacobian in one batch: x, then x -+ h_i e_i.
bool residuals_and_jacobian(const LeastSquaresProblem& p, std::span<const double> x,
                            const std::vector<double>& typical, double step, double* r,
                            double* jac_row_major, Eigen::MatrixXd* jac) {
  const int n = p.n_params, m = p.n_residuals;
  const bool want_j = jac_row_major || jac;
  std::vector<std::vector<double>> points(want_j ? 1 + 2 * n : 1,
                                          std::vector<double>(x.begin(), x.end()));
  std::vector<Step> steps(n);
  if (want_j)
    for (int i = 0; i < n; ++i) {
      steps[i] = step_at(p, x, typical, step, i);
      points[1 + 2 * i][i] -= steps[i].minus;
      points[2 + 2 * i][i] += steps[i].plus;
    }
  std::vector<std::vector<double>> res(points.size(), std::vector<double>(m));
  std::vector<char> ok(points.size(), 1);
  p.evaluate(points, res, ok);
  if (!ok[0]) return false;
  if (r) std::copy(res[0].begin(), res[0].end(), r);
  if (!want_j) return true;
  for (int i = 0; i < n; ++i) {
    const auto& lo = steps[i].minus > 0 ? res[1 + 2 * i] : res[0];
    const auto& hi = steps[i].plus > 0 ? res[2 + 2 * i] : res[0];
    if ((steps[i].minus > 0 && !ok[1 + 2 * i]) || (steps[i].plus > 0 && !ok[2 + 2 * i]))
      return false;
    const double h = steps[i].minus + steps[i].plus;
    for (int k = 0; k < m; ++k) {
      const double d = (hi[k] - lo[k]) / h;
      if (jac_row_major) jac_row_major[k * n + i] = d;
      if (jac) (*jac)(k, i) = d;
    }
  }
  return true;
}

class RunsCost final : public ceres::CostFunction {
 public:
  RunsCost(const LeastSquaresProblem& p, const std::vector<double>& typical, double step)
      : p_(p), typical_(typical), step_(step) {
    set_num_residuals(p.n_residuals);
    mutable_parameter_block_sizes()->push_back(p.n_params);
  }
  bool Evaluate(double const* const* parameters, double* residuals,
                double** jacobians) const override {
    const std::span<const double> x(parameters[0], static_cast<std::size_t>(p_.n_params));
    return residuals_and_jacobian(p_, x, typical_, step_, residuals,
                                  jacobians ? jacobians[0] : nullptr, nullptr);
  }

 private:
  const LeastSquaresProblem& p_;
  const std::vector<double>& typical_;
  double step_;
};

std::vector<double> typical_of(const LeastSquaresProblem& p, std::span<const double> x0) {
  if (!p.typical.empty()) return p.typical;
  std::vector<double> t(x0.size());
  for (std::size_t i = 0; i < x0.size(); ++i) t[i] = std::max(std::abs(x0[i]), 1.0);
  return t;
}

}  // namespace

Eigen::MatrixXd central_jacobian(const LeastSquaresProblem& problem, std::span<const double> x,
                                 const std::vector<double>& typical, double step,
                                 std::vector<double>* residuals) {
  Eigen::MatrixXd J(problem.n_residuals, problem.n_params);
  std::vector<double> r(problem.n_residuals);
  if (!residuals_and_jacobian(problem, x, typical, step, r.data(), nullptr, &J))
    throw SolverError("least squares: the residuals could not be evaluated around the estimate");
  if (residuals) *residuals = std::move(r);
  return J;
}

namespace {

LeastSquaresResult attempt(const LeastSquaresProblem& problem, std::span<const double> x0,
                           const LeastSquaresOptions& options, const std::vector<double>& typical,
                           double initial_radius) {
  LeastSquaresResult out;
  out.x.assign(x0.begin(), x0.end());
  ceres::Problem::Options po;
  po.cost_function_ownership = ceres::TAKE_OWNERSHIP;
  ceres::Problem cp(po);
  cp.AddResidualBlock(new RunsCost(problem, typical, options.step), nullptr, out.x.data());
  for (int i = 0; i < problem.n_params; ++i) {
    if (!problem.lower.empty() && std::isfinite(problem.lower[i]))
      cp.SetParameterLowerBound(out.x.data(), i, problem.lower[i]);
    if (!problem.upper.empty() && std::isfinite(problem.upper[i]))
      cp.SetParameterUpperBound(out.x.data(), i, problem.upper[i]);
  }
  ceres::Solver::Options so;
  so.linear_solver_type = ceres::DENSE_QR;
  so.max_num_iterations = options.max_iterations;
  so.function_tolerance = options.function_tolerance;
  so.gradient_tolerance = options.gradient_tolerance;
  so.parameter_tolerance = options.parameter_tolerance;
  so.initial_trust_region_radius = initial_radius;
  so.logging_type = ceres::SILENT;
  so.minimizer_progress_to_stdout = false;
  so.num_threads = 1;  // the caller's evaluate is where the parallel work is
  ceres::Solver::Summary summary;
  ceres::Solve(so, &cp, &summary);
  out.converged = summary.termination_type == ceres::CONVERGENCE;
  out.iterations = static_cast<int>(summary.iterations.size());
  out.message = summary.message;
  out.jacobian = central_jacobian(problem, out.x, typical, options.step, &out.residuals);
  out.cost = 0;
  for (double r : out.residuals) out.cost += 0.5 * r * r;
  return out;
}

}  // namespace

LeastSquaresResult solve_least_squares(const LeastSquaresProblem& problem,
                                       std::span<const double> x0,
                                       const LeastSquaresOptions& options) {
  const std::vector<double> typical = typical_of(problem, x0);
  {
    std::vector<double> r(problem.n_residuals);
    if (!residuals_and_jacobian(problem, x0, typical, options.step, r.data(), nullptr, nullptr))
      throw SolverError("least squares: the residuals cannot be evaluated at the start");
  }
  // Ceres' default first trust region (1e4) lets the first steps run far;
  // from a poor start they can end on a plateau where a parameter has lost
  // its influence (NIST's BoxBOD from its first start: b2 -> 84, the
  // model a constant). Such an end (no convergence, or a Jacobian of lower
  // rank) is tried again from the same start with a first region of 1e-4,
  // which grows with each successful step; the lower cost is kept.
  LeastSquaresResult first = attempt(problem, x0, options, typical, 1e4);
  if (first.converged && gauss_newton_covariance(first.jacobian).rank == problem.n_params)
    return first;
  LeastSquaresResult second = attempt(problem, x0, options, typical, 1e-4);
  second.iterations += first.iterations;
  return second.cost < first.cost ? second : first;
}

GaussNewtonCovariance gauss_newton_covariance(const Eigen::MatrixXd& jacobian) {
  const Eigen::JacobiSVD<Eigen::MatrixXd> svd(jacobian, Eigen::ComputeThinV);
  const Eigen::VectorXd& s = svd.singularValues();
  const auto n = jacobian.cols();
  const double cut =
      s.size() > 0 ? static_cast<double>(n) * std::numeric_limits<double>::epsilon() * s(0) : 0;
  GaussNewtonCovariance out;
  Eigen::VectorXd inv2 = Eigen::VectorXd::Zero(n);
  for (Eigen::Index i = 0; i < s.size(); ++i)
    if (s(i) > cut) {
      inv2(i) = 1 / (s(i) * s(i));
      ++out.rank;
    } else {
      inv2(i) = std::numeric_limits<double>::infinity();
    }
  const Eigen::MatrixXd& V = svd.matrixV();
  out.cov = Eigen::MatrixXd::Zero(n, n);
  for (Eigen::Index i = 0; i < n; ++i)
    for (Eigen::Index j = 0; j < n; ++j) {
      double c = 0;
      for (Eigen::Index k = 0; k < n; ++k)
        if (V(i, k) != 0 && V(j, k) != 0) c += V(i, k) * V(j, k) * inv2(k);
      out.cov(i, j) = c;
    }
  return out;
}

}  // namespace rxtrain
