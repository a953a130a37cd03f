// A packed bed whose pellets limit the rate: the tubular stage with
// effectiveness factors against GSL integrating the same bed, with eta from
// the first-order closed form of a sphere (Aris 1957) evaluated at each
// local temperature — an independent route to the same numbers. All
// kinetic and physical data here are invented for the tests.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "test_species.hpp"

using namespace rxtrain;
using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;

namespace {

// Liquid A -> B in solvent S, first order per kg of catalyst:
// r = k(T) C_A, k(T) = k0 exp(-Ea/R (1/T - 1/T0)) in m3/(kg s). A and B
// have equal molar volumes, so the volumetric flow is constant.
constexpr double kT0 = 330, kK0 = 1e-6, kEa = 60e3, kDH = -60e3;
constexpr double kRhoB = 800, kRhoP = 1300;   // bulk and pellet densities, kg/m3
constexpr double kDiam = 4e-3, kD = 2.6e-10;  // sphere diameter, m; D_eff, m2/s
const std::vector<double> kCp{150, 170, 75};

Mechanism first_order() {
  Reaction r;
  r.id = "R";
  r.equation = "A => B";
  r.nu = {-1, 1, 0};
  r.rate.orders = {1, 0, 0};
  r.rate.A = kK0;
  r.rate.Ea = kEa;
  r.rate.T_ref = kT0;
  r.rate.basis = RateBasis::Catalyst;
  r.dH_298 = kDH;
  return Mechanism(Phase::Liquid,
                   {test::make_species("A", kCp[0], 0.0, 100.0, 0.1, 900),
                    test::make_species("B", kCp[1], 0.0, 100.0, 0.1, 900),
                    test::make_species("S", kCp[2], 0.0, 100.0, 0.018, 1000)},
                   {r});
}

ReactorSpec bed(EffectivenessModel model, double V) {
  ReactorSpec s;
  s.id = "R1";
  s.heat = HeatMode::Adiabatic;
  s.volume = V;
  s.bulk_density = kRhoB;
  PelletSpec p;
  p.shape = PelletShape::Sphere;
  p.size = kDiam;
  p.D_eff = {kD, kD, kD};
  p.density = kRhoP;
  p.effectiveness = model;
  s.pellet = p;
  s.where = {"case.yaml", 12, 5};
  return s;
}

// The sphere's closed form on phi = L sqrt(k_v / D), L = V_p/S_p = d/6
// (Aris 1957): eta = (1/phi) (1/tanh(3 phi) - 1/(3 phi)).
double sphere_eta(double phi) { return (1 / std::tanh(3 * phi) - 1 / (3 * phi)) / phi; }

}  // namespace

TEST_CASE("an adiabatic bed with pellet-limited first-order rates agrees with GSL", "[pellet]") {
  GslNoAbort no_abort;
  const Mechanism mech = first_order();
  const double FA0 = 2.0, FS = 30.0;
  const double v = FA0 * 0.1 / 900 + FS * 0.018 / 1000;  // m3/s
  const Stream inlet{kT0, 2e5, {FA0, 0.0, FS}};
  const ConversionBasis basis{0, FA0};
  const double V_end = 1.5;

  double eta_in = 0, eta_out = 0;
  GslOde ode(2, [&](double, const double* y, double* dy) {
    const double FA = y[0], T = y[1];
    const double k = kK0 * std::exp(-kEa / kGasConstant * (1 / T - 1 / kT0));
    const double phi = kDiam / 6 * std::sqrt(kRhoP * k / kD);
    const double eta = sphere_eta(phi);
    const double rate = kRhoB * k * FA / v * eta;                   // mol/(m3 bed s)
    const double dH = kDH + (kCp[1] - kCp[0]) * (T - kReferenceT);  // Kirchhoff
    dy[0] = -rate;
    dy[1] = -dH * rate / (FA * kCp[0] + (FA0 - FA) * kCp[1] + FS * kCp[2]);
  });

  SunContext ctx;
  PfrOptions tight;
  tight.cvode.rtol = 1e-10;
  tight.cvode.atol = 1e-14;
  for (const auto model : {EffectivenessModel::Thiele, EffectivenessModel::Pellet}) {
    const bool solved = model == EffectivenessModel::Pellet;
    INFO((solved ? "pellet solved" : "generalized modulus"));
    const StageResult res = run_pfr(mech, bed(model, V_end), inlet, basis, ctx, tight);
    REQUIRE(res.effectiveness.size() == 1);
    // The modulus is exact for first order; the solved pellet holds eta to
    // its grid tolerance (max(rtol, 1e-7), PelletSolveOptions), which the
    // bed carries into X and T.
    const double tol = solved ? 1e-6 : 1e-8;
    std::vector<double> y{FA0, kT0};
    double V_prev = 0;
    int compared = 0;
    for (const auto& p : res.profile) {
      if (p.V > V_prev) ode.advance(V_prev, p.V, y);
      V_prev = p.V;
      INFO("V = " << p.V);
      CHECK(p.T == Approx(y[1]).epsilon(tol));
      CHECK(p.X == Approx(1 - y[0] / FA0).epsilon(tol).margin(1e-10));
      const double k = kK0 * std::exp(-kEa / kGasConstant * (1 / p.T - 1 / kT0));
      const double eta = sphere_eta(kDiam / 6 * std::sqrt(kRhoP * k / kD));
      REQUIRE(p.eta.size() == 1);
      CHECK(p.eta[0] == Approx(eta).epsilon(tol));
      if (compared == 0) eta_in = eta;
      eta_out = eta;
      ++compared;
    }
    CHECK(compared > 10);
    // The pellets matter here, and more as the bed heats: eta falls along it.
    CHECK(eta_in < 0.8);
    CHECK(eta_out < eta_in);
    CHECK(res.effectiveness[0].max == Approx(eta_in).epsilon(tol));
    CHECK(res.effectiveness[0].min == Approx(eta_out).epsilon(tol));
    CHECK(res.conversion == Approx(1 - y[0] / FA0).epsilon(tol));
    CHECK(res.conversion > 0.3);
  }
}
