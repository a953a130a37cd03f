// Damped, bounded Newton solver on systems with known roots.
#include "rxtrain/solvers/newton.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <stdexcept>

using namespace rxtrain;

namespace {

// Wraps a residual and records whether any evaluation left the bounds.
struct BoundsWatch {
  Eigen::VectorXd lower, upper;
  bool violated = false;
  int evaluations = 0;
  void see(const Eigen::VectorXd& x) {
    ++evaluations;
    for (Eigen::Index i = 0; i < x.size(); ++i)
      if (x[i] < lower[i] || x[i] > upper[i]) violated = true;
  }
};

}  // namespace

TEST_CASE("Newton finds the circle-line intersection inside the bounds", "[newton]") {
  // x^2 + y^2 = 4 and y = x / 2 meet at +-(4/sqrt(5), 2/sqrt(5)) (analytic).
  // Bounds x, y >= 0 select the positive root. From (0.1, 0.1) the full first
  // Newton step lands at x = 13.4, past the upper bound 10 (worked by hand),
  // so the bound rule has to act.
  BoundsWatch w{Eigen::Vector2d(0, 0), Eigen::Vector2d(10, 10)};
  ResidualFunction fn = [&](const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
    w.see(x);
    f.resize(2);
    f << x[0] * x[0] + x[1] * x[1] - 4, x[1] - 0.5 * x[0];
    if (J) {
      J->resize(2, 2);
      *J << 2 * x[0], 2 * x[1], -0.5, 1;
    }
  };
  Eigen::VectorXd x(2);
  x << 0.1, 0.1;
  const NewtonResult res = solve_newton(fn, x, w.lower, w.upper);
  INFO(res.message);
  REQUIRE(res.converged);
  CHECK(x[0] == Approx(4 / std::sqrt(5.0)).epsilon(1e-12));
  CHECK(x[1] == Approx(2 / std::sqrt(5.0)).epsilon(1e-12));
  CHECK(res.residual_norm <= 1e-11);
  CHECK(res.iterations < 30);
  CHECK_FALSE(w.violated);
}

TEST_CASE("Newton solves the Rosenbrock gradient", "[newton]") {
  // grad of 100 (y - x^2)^2 + (1 - x)^2 vanishes only at (1, 1) (analytic).
  BoundsWatch w{Eigen::Vector2d(-2, -1), Eigen::Vector2d(2, 3)};
  ResidualFunction fn = [&](const Eigen::VectorXd& v, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
    w.see(v);
    const double x = v[0], y = v[1];
    f.resize(2);
    f << -400 * x * (y - x * x) - 2 * (1 - x), 200 * (y - x * x);
    if (J) {
      J->resize(2, 2);
      *J << 1200 * x * x - 400 * y + 2, -400 * x, -400 * x, 200;
    }
  };
  // From the customary start (-1.2, 1) the residual-norm line search creeps
  // along the curved valley: measured 180 iterations, so the limit is raised
  // (a known trait of damped Newton on this function, not a failure).
  NewtonOptions opt;
  opt.max_iterations = 500;
  for (const auto& start : {Eigen::Vector2d(-1.2, 1.0), Eigen::Vector2d(0.5, 0.5),
                            // On the x upper bound; the Newton steps then head
                            // out through y = 3. Scaling the whole step to the
                            // boundary alone stalled here at (1.9988, 3.0)
                            // ("line search failed"); the root is inside.
                            Eigen::Vector2d(2.0, 1.0)}) {
    Eigen::VectorXd x = start;
    const NewtonResult res = solve_newton(fn, x, w.lower, w.upper, opt);
    INFO("start " << start.transpose() << ": " << res.message);
    REQUIRE(res.converged);
    CHECK(x[0] == Approx(1.0).epsilon(1e-10));
    CHECK(x[1] == Approx(1.0).epsilon(1e-10));
    CHECK_FALSE(w.violated);
  }
}

TEST_CASE("Newton keeps iterates inside bounds when the root is outside", "[newton]") {
  // f = x - 5 on [0, 3]: no root in the box; the iterates approach the
  // upper bound but never pass it, and the result is not converged.
  BoundsWatch w{Eigen::VectorXd::Constant(1, 0.0), Eigen::VectorXd::Constant(1, 3.0)};
  ResidualFunction fn = [&](const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
    w.see(x);
    f.resize(1);
    f[0] = x[0] - 5;
    if (J) *J = Eigen::MatrixXd::Ones(1, 1);
  };
  Eigen::VectorXd x = Eigen::VectorXd::Constant(1, 1.0);
  const NewtonResult res = solve_newton(fn, x, w.lower, w.upper);
  CHECK_FALSE(res.converged);
  CHECK_FALSE(res.message.empty());
  CHECK_FALSE(w.violated);
  CHECK(x[0] <= 3.0);
  CHECK(x[0] > 2.9);
  CHECK(std::isfinite(res.residual_norm));
}

TEST_CASE("Newton reports non-convergence on a system without a root", "[newton]") {
  // x^2 + 1 has no real root; the merit 0.5 (x^2+1)^2 has its minimum at a
  // singular Jacobian (x = 0), so Newton must give up and say so.
  ResidualFunction fn = [](const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
    f.resize(1);
    f[0] = x[0] * x[0] + 1;
    if (J) *J = Eigen::MatrixXd::Constant(1, 1, 2 * x[0]);
  };
  Eigen::VectorXd x = Eigen::VectorXd::Constant(1, 1.5);
  const Eigen::VectorXd lo = Eigen::VectorXd::Constant(1, -10);
  const Eigen::VectorXd hi = Eigen::VectorXd::Constant(1, 10);
  const NewtonResult res = solve_newton(fn, x, lo, hi);
  INFO(res.message);
  CHECK_FALSE(res.converged);
  CHECK_FALSE(res.message.empty());
  CHECK(res.residual_norm >= 1.0);  // |x^2 + 1| >= 1 everywhere
  CHECK(std::isfinite(x[0]));
}

TEST_CASE("Newton shortens a step whose trial point throws", "[newton]") {
  // f = ln x - ln 2 (root x = 2) throws for x <= 0.5; a full step from x = 9
  // lands at 9 (1 - ln 4.5) < 0, so the line search must back off rather than
  // let the exception escape.
  ResidualFunction fn = [](const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
    if (x[0] <= 0.5) throw std::domain_error("ln of a small number");
    f.resize(1);
    f[0] = std::log(x[0]) - std::log(2.0);
    if (J) *J = Eigen::MatrixXd::Constant(1, 1, 1 / x[0]);
  };
  Eigen::VectorXd x = Eigen::VectorXd::Constant(1, 9.0);
  const NewtonResult res =
      solve_newton(fn, x, Eigen::VectorXd::Constant(1, -100), Eigen::VectorXd::Constant(1, 100));
  INFO(res.message);
  REQUIRE(res.converged);
  CHECK(x[0] == Approx(2.0).epsilon(1e-12));
}

TEST_CASE("Newton stops on max_iterations and reports it", "[newton]") {
  // atan(x) from x = 1.5 converges slowly under damping; one iteration is
  // not enough.
  ResidualFunction fn = [](const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
    f.resize(1);
    f[0] = std::atan(x[0]);
    if (J) *J = Eigen::MatrixXd::Constant(1, 1, 1 / (1 + x[0] * x[0]));
  };
  Eigen::VectorXd x = Eigen::VectorXd::Constant(1, 1.5);
  NewtonOptions opt;
  opt.max_iterations = 1;
  const NewtonResult res = solve_newton(fn, x, Eigen::VectorXd::Constant(1, -100),
                                        Eigen::VectorXd::Constant(1, 100), opt);
  CHECK_FALSE(res.converged);
  CHECK(res.iterations == 1);
  CHECK(res.message.find("1 iterations") != std::string::npos);
  // With the default limit it converges to the root x = 0.
  x[0] = 1.5;
  const NewtonResult full =
      solve_newton(fn, x, Eigen::VectorXd::Constant(1, -100), Eigen::VectorXd::Constant(1, 100));
  REQUIRE(full.converged);
  CHECK(std::abs(x[0]) < 1e-11);
}
