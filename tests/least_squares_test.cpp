// The least-squares core (solvers/least_squares) against the NIST
// Statistical Reference Datasets for nonlinear regression (NIST/ITL StRD,
// https://www.itl.nist.gov/div898/strd/, datasets Misra1a, Thurber,
// BoxBOD, Rat43, Eckerle4; copied unchanged into tests/data/strd with
// their certified values): the certified parameters to 6 significant
// digits and their certified standard deviations to 4, from both of
// NIST's starting points. And Student's t (solvers/student_t) against GSL.
#include "rxtrain/solvers/least_squares.hpp"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_sf_gamma.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "rxtrain/solvers/student_t.hpp"

using namespace rxtrain;
using Catch::Matchers::WithinRel;

namespace {

struct Dataset {
  std::map<std::string, std::string> keys;
  std::vector<double> x, y;
  std::vector<std::string> params;
  double value(const std::string& k) const { return std::stod(keys.at(k)); }
};

Dataset read_dataset(const std::string& name) {
  std::ifstream in(std::string(RXTRAIN_SOURCE_DIR) + "/tests/data/strd/" + name + ".txt");
  REQUIRE(in.good());
  Dataset d;
  std::string line;
  bool data = false;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#') continue;
    if (data) {
      std::istringstream s(line);
      double y = 0, x = 0;
      s >> y >> x;
      d.y.push_back(y);
      d.x.push_back(x);
      continue;
    }
    if (line.rfind("data:", 0) == 0) {
      data = true;
      continue;
    }
    const auto eq = line.find(" = ");
    d.keys[line.substr(0, eq)] = line.substr(eq + 3);
  }
  std::istringstream p(d.keys.at("parameters"));
  for (std::string b; p >> b;) d.params.push_back(b);
  return d;
}

// The models, as each file's `model` line gives them.
double model(const std::string& name, const std::vector<double>& b, double x) {
  if (name == "Misra1a" || name == "BoxBOD") return b[0] * (1 - std::exp(-b[1] * x));
  if (name == "Thurber")
    return (b[0] + b[1] * x + b[2] * x * x + b[3] * x * x * x) /
           (1 + b[4] * x + b[5] * x * x + b[6] * x * x * x);
  if (name == "Rat43") return b[0] / std::pow(1 + std::exp(b[1] - b[2] * x), 1 / b[3]);
  // Eckerle4
  const double z = (x - b[2]) / b[1];
  return b[0] / b[1] * std::exp(-0.5 * z * z);
}

void check_dataset(const std::string& name) {
  const Dataset d = read_dataset(name);
  const int n = static_cast<int>(d.params.size());
  const int m = static_cast<int>(d.x.size());
  LeastSquaresProblem p;
  p.n_params = n;
  p.n_residuals = m;
  p.evaluate = [&](std::span<const std::vector<double>> points, std::span<std::vector<double>> res,
                   std::span<char> ok) {
    for (std::size_t k = 0; k < points.size(); ++k) {
      for (int i = 0; i < m; ++i) res[k][i] = d.y[i] - model(name, points[k], d.x[i]);
      ok[k] = 1;
      for (double r : res[k])
        if (!std::isfinite(r)) ok[k] = 0;
    }
  };
  const double dof = d.value("degrees_of_freedom");
  for (const char* start : {"start1", "start2"}) {
    INFO(name << " from " << start);
    std::vector<double> x0;
    for (const auto& b : d.params) x0.push_back(d.value(std::string(start) + "." + b));
    LeastSquaresOptions o;
    o.max_iterations = 1000;
    const LeastSquaresResult r = solve_least_squares(p, x0, o);
    INFO(r.message << " x0 " << r.x[0] << " x1 " << r.x[1] << " it " << r.iterations);
    CHECK_THAT(2 * r.cost, WithinRel(d.value("residual_sum_of_squares"), 1e-6));
    const auto cov = gauss_newton_covariance(r.jacobian);
    REQUIRE(cov.rank == n);
    const double s2 = 2 * r.cost / dof;
    for (int i = 0; i < n; ++i) {
      INFO(d.params[i]);
      CHECK_THAT(r.x[i], WithinRel(d.value("certified." + d.params[i]), 1e-6));
      CHECK_THAT(std::sqrt(s2 * cov.cov(i, i)),
                 WithinRel(d.value("certified_sd." + d.params[i]), 1e-4));
    }
  }
}

}  // namespace

TEST_CASE("least squares reproduces NIST StRD Misra1a (lower difficulty)", "[least-squares]") {
  check_dataset("Misra1a");
}
TEST_CASE("least squares reproduces NIST StRD Thurber (higher difficulty)", "[least-squares]") {
  check_dataset("Thurber");
}
TEST_CASE("least squares reproduces NIST StRD BoxBOD (higher difficulty)", "[least-squares]") {
  check_dataset("BoxBOD");
}
TEST_CASE("least squares reproduces NIST StRD Rat43 (higher difficulty)", "[least-squares]") {
  check_dataset("Rat43");
}
TEST_CASE("least squares reproduces NIST StRD Eckerle4 (higher difficulty)", "[least-squares]") {
  check_dataset("Eckerle4");
}

TEST_CASE("Student's t CDF, quantile and the incomplete beta agree with GSL", "[least-squares]") {
  // GSL's gsl_cdf_tdist_P / _Pinv and gsl_sf_beta_inc: an independent
  // implementation of the same functions.
  for (double nu : {1.0, 2.0, 3.5, 9.0, 36.0, 1000.0}) {
    for (double t : {-40.0, -3.0, -0.7, 0.0, 0.3, 1.96, 12.0}) {
      INFO("nu " << nu << " t " << t);
      CHECK(std::abs(student_t_cdf(t, nu) - gsl_cdf_tdist_P(t, nu)) < 1e-13);
    }
    for (double q : {0.001, 0.025, 0.5, 0.8, 0.975, 0.9995}) {
      INFO("nu " << nu << " p " << q);
      CHECK_THAT(student_t_quantile(q, nu) + 1, WithinRel(gsl_cdf_tdist_Pinv(q, nu) + 1, 1e-10));
    }
  }
  for (double a : {0.5, 2.0, 30.0})
    for (double b : {0.5, 1.0, 7.0})
      for (double x : {0.01, 0.3, 0.5, 0.9, 0.999})
        CHECK(std::abs(incomplete_beta(a, b, x) - gsl_sf_beta_inc(a, b, x)) < 1e-13);
}
