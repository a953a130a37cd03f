// Catalyst pellet effectiveness factors (models/pellet.hpp) against closed
// forms and GSL.
#include "rxtrain/models/pellet.hpp"

#include <gsl/gsl_sf_bessel.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

using namespace rxtrain;

namespace {

// A -> B (or A + B -> C with `second`) at rate k c_A^order, per m3 pellet.
class PowerLaw : public PelletKinetics {
 public:
  PowerLaw(double k, double order) : k_(k), order_(order) {}
  int n_species() const override { return 2; }
  int n_reactions() const override { return 1; }
  double nu(int, int i) const override { return i == 0 ? -1 : 1; }
  double rate(int, const double* c, double* g) const override {
    const double a = std::max(c[0], 0.0);
    if (g) {
      g[0] = c[0] > 0 ? k_ * order_ * std::pow(a, order_ - 1) : 0.0;
      g[1] = 0;
    }
    return k_ * std::pow(a, order_);
  }

 private:
  double k_, order_;
};

const PelletShape kShapes[] = {PelletShape::Slab, PelletShape::Cylinder, PelletShape::Sphere};

}  // namespace

TEST_CASE("first-order effectiveness matches the closed forms", "[pellet]") {
  // Closed forms of Aris 1957 on phi = L sqrt(k/D), L = V_p/S_p; the
  // cylinder's Bessel functions from GSL (exponentially scaled, so large
  // arguments stay finite).
  for (double phi : {9.9e-3, 1e-2, 0.05, 0.3, 1.0, 2.5, 10.0, 60.0, 240.0, 1000.0}) {
    CHECK(first_order_effectiveness(PelletShape::Slab, phi) ==
          Approx(std::tanh(phi) / phi).epsilon(1e-10));
    CHECK(first_order_effectiveness(PelletShape::Sphere, phi) ==
          Approx((1 / std::tanh(3 * phi) - 1 / (3 * phi)) / phi).epsilon(1e-10));
    const double gsl = gsl_sf_bessel_I1_scaled(2 * phi) / (phi * gsl_sf_bessel_I0_scaled(2 * phi));
    CHECK(first_order_effectiveness(PelletShape::Cylinder, phi) == Approx(gsl).epsilon(1e-10));
  }
  // Small moduli, where the closed forms cancel in floating point: their
  // Taylor series 1 - c phi^2 + O(phi^4), c = 1/3, 1/2, 3/5 (expanding
  // tanh, I1/I0 and coth).
  for (double phi : {1e-7, 1e-5, 1e-4}) {
    CHECK(first_order_effectiveness(PelletShape::Slab, phi) ==
          Approx(1 - phi * phi / 3).epsilon(1e-12));
    CHECK(first_order_effectiveness(PelletShape::Cylinder, phi) ==
          Approx(1 - phi * phi / 2).epsilon(1e-12));
    CHECK(first_order_effectiveness(PelletShape::Sphere, phi) ==
          Approx(1 - 0.6 * phi * phi).epsilon(1e-12));
  }
}

TEST_CASE("pellet length scale is V_p/S_p", "[pellet]") {
  // Geometry: sphere d/6, infinite cylinder d/4, slab open on both faces
  // thickness/2, finite cylinder pi d^2 l/4 over pi d l + pi d^2/2.
  CHECK(pellet_length_scale(PelletShape::Sphere, 3e-3, std::nullopt) == Approx(0.5e-3));
  CHECK(pellet_length_scale(PelletShape::Cylinder, 3e-3, std::nullopt) == Approx(0.75e-3));
  CHECK(pellet_length_scale(PelletShape::Slab, 2e-3, std::nullopt) == Approx(1e-3));
  CHECK(pellet_length_scale(PelletShape::Cylinder, 3e-3, 6e-3) ==
        Approx(3e-3 * 6e-3 / (4 * 6e-3 + 2 * 3e-3)));
}

TEST_CASE("generalized modulus is exact for first order", "[pellet]") {
  // Bischoff 1965: for r = k c the generalized modulus is L sqrt(k/D).
  const double k = 50, D = 2e-6, c_s[2] = {40, 5};
  for (PelletShape shape : kShapes) {
    const PelletTransport tr{shape, 1e-3, {D, D}};
    const double phi = 1e-3 * std::sqrt(k / D);
    CHECK(thiele_effectiveness(PowerLaw(k, 1), tr, c_s, 0, 0) ==
          Approx(first_order_effectiveness(shape, phi)).epsilon(1e-12));
  }
}

TEST_CASE("pellet solve converges to the first-order closed form", "[pellet]") {
  // Aris 1957 closed forms; the solve's grid refinement at rtol 1e-8 must
  // land within 1e-6 of them.
  const double D = 2e-6, c_s[2] = {40, 5};
  for (PelletShape shape : kShapes)
    for (double phi : {0.2, 1.0, 3.0, 12.0}) {
      const double L = 1e-3, k = phi * phi * D / (L * L);
      const PelletTransport tr{shape, L, {D, 3 * D}};
      PelletSolver solver(PelletSolveOptions{.rtol = 1e-8});
      double eta = 0;
      solver.solve(PowerLaw(k, 1), tr, c_s, &eta);
      CAPTURE(static_cast<int>(shape), phi, solver.last_nodes());
      CHECK(eta == Approx(first_order_effectiveness(shape, phi)).epsilon(1e-6));
    }
}

TEST_CASE("pellet solve agrees with the generalized modulus for second order", "[pellet]") {
  // r = k c^2. Bischoff's (1965) generalized modulus is exact in both
  // limits (eta -> 1 and eta -> 1/phi) and approximate in between; a
  // deviation up to about 10% near phi = 1 for orders 0 to 2 is the
  // known accuracy of the normalization (from memory: Froment & Bischoff,
  // Chemical Reactor Analysis and Design, ch. 3, figure of eta vs the
  // generalized modulus for several orders). Large moduli check the
  // asymptote tightly: there the neglected terms are O(1/phi^2).
  const double D = 2e-6, L = 1e-3, c_s[2] = {40, 0};
  for (PelletShape shape : kShapes)
    for (double phi : {0.1, 0.5, 1.0, 2.0, 5.0, 50.0}) {
      // phi = L sqrt(3 k c_s / (2 D)) for second order.
      const double k = phi * phi * 2 * D / (3 * c_s[0] * L * L);
      const PelletTransport tr{shape, L, {D, D}};
      PelletSolver solver(PelletSolveOptions{.rtol = 1e-6});
      double eta = 0;
      solver.solve(PowerLaw(k, 2), tr, c_s, &eta);
      const double thiele = thiele_effectiveness(PowerLaw(k, 2), tr, c_s, 0, 0);
      CAPTURE(static_cast<int>(shape), phi, eta, thiele);
      CHECK(std::abs(thiele - eta) <= (phi >= 50 ? 0.01 : 0.10) * eta);
    }
}

TEST_CASE("pellet solve handles a reversible law and warm starts", "[pellet]") {
  // A <=> B, r = k (c_A - c_B / K), equal D: first order in the distance
  // from equilibrium, so eta is the first-order closed form of
  // phi = L sqrt(k (1 + 1/K) / D) (Aris 1957); a second call warm-starts
  // from the first and must give the same answer.
  class Reversible : public PelletKinetics {
   public:
    int n_species() const override { return 2; }
    int n_reactions() const override { return 1; }
    double nu(int, int i) const override { return i == 0 ? -1 : 1; }
    double rate(int, const double* c, double* g) const override {
      if (g) {
        g[0] = k;
        g[1] = -k / K;
      }
      return k * (c[0] - c[1] / K);
    }
    double k = 20, K = 4;
  } kin;
  const double D = 1e-6, L = 1e-3, c_s[2] = {30, 3};
  const PelletTransport tr{PelletShape::Sphere, L, {D, D}};
  const double phi = L * std::sqrt(kin.k * (1 + 1 / kin.K) / D);
  PelletSolver solver(PelletSolveOptions{.rtol = 1e-8});
  double eta1 = 0, eta2 = 0;
  solver.solve(kin, tr, c_s, &eta1);
  solver.solve(kin, tr, c_s, &eta2);
  CHECK(eta1 == Approx(first_order_effectiveness(PelletShape::Sphere, phi)).epsilon(1e-6));
  CHECK(eta2 == Approx(eta1).epsilon(1e-9));
  CHECK(thiele_effectiveness(kin, tr, c_s, 0, 0) ==
        Approx(first_order_effectiveness(PelletShape::Sphere, phi)).epsilon(1e-10));
}
