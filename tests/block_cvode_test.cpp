// CVODE on independent systems stacked as blocks (CvodeIntegrator's block
// constructor), against the analytic solution of first-order decay
// A -> B, y_A = exp(-k t) (a linear ODE; any ODE text, e.g. Hairer,
// Norsett & Wanner, Solving ODEs I, sec. I.2), and against each system
// integrated alone.
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "rxtrain/solvers/cvode.hpp"

using namespace rxtrain;

namespace {

// Block b: y_A' = -k_b y_A, y_B' = k_b y_A, y(0) = (1, 0).
struct Decay {
  std::vector<double> k;
  int rhs(const double* y, double* yd) const {
    for (std::size_t b = 0; b < k.size(); ++b) {
      yd[2 * b] = -k[b] * y[2 * b];
      yd[2 * b + 1] = k[b] * y[2 * b];
    }
    return 0;
  }
  int jac(const double*, double* J) const {  // column-major 2x2 blocks
    for (std::size_t b = 0; b < k.size(); ++b) {
      double* B = J + 4 * b;
      B[0] = -k[b];  // d yA'/d yA
      B[1] = k[b];   // d yB'/d yA
    }
    return 0;
  }
};

// y_A(1) of each block, integrated together (one system) or alone.
std::vector<double> integrate(const std::vector<double>& k, const CvodeOptions& o, long* steps) {
  SunContext ctx;
  Decay d{k};
  const int m = static_cast<int>(k.size());
  CvodeIntegrator ode(
      ctx, m, 2, [&](double, const double* y, double* yd) { return d.rhs(y, yd); },
      [&](double, const double* y, double* J) { return d.jac(y, J); }, o,
      std::vector<double>(2 * m, 1.0));
  std::vector<double> y(2 * m, 0.0);
  for (int b = 0; b < m; ++b) y[2 * b] = 1.0;
  ode.init(0.0, y);
  ode.set_stop_time(1.0);
  double t = 0;
  while (ode.advance(1.0, t, y) != CvodeIntegrator::Event::Stop) {
  }
  if (steps != nullptr) *steps = ode.stats().steps;
  std::vector<double> out;
  for (int b = 0; b < m; ++b) {
    CHECK(y[2 * b] + y[2 * b + 1] == Approx(1.0).epsilon(1e-12));  // A + B is conserved
    out.push_back(y[2 * b]);
  }
  return out;
}

}  // namespace

TEST_CASE("block-diagonal CVODE: every block follows its analytic solution", "[solver][block]") {
  // Rates from slow to stiff (k t up to 30), and idle blocks (k = 0).
  const std::vector<double> k{0.0, 0.1, 1.0, 5.0, 0.0, 30.0, 2.5, 0.0};
  CvodeOptions o;  // rtol 1e-8
  long together_steps = 0;
  const auto together = integrate(k, o, &together_steps);
  for (std::size_t b = 0; b < k.size(); ++b) {
    long alone_steps = 0;
    const double alone = integrate({k[b]}, o, &alone_steps)[0];
    const double exact = std::exp(-k[b]);
    INFO("k = " << k[b]);
    const double err_together = std::abs(together[b] - exact);
    const double err_alone = std::abs(alone - exact);
    // Held to the tolerance on its own: no worse than alone, where
    // CVODE's global error is a small multiple of rtol.
    CHECK(err_together <= 1e-7);
    CHECK(err_together <= 2 * err_alone + 1e-12);
    // One block's steps: at least as many as it needs alone.
    CHECK(together_steps >= alone_steps);
  }
}
