// Packed beds with a pressure drop: Ergun's equation (Ergun, Chem. Eng.
// Prog. 48 (1952) 89-94) evaluated by hand, the closed forms of a bed
// without reaction (derived below), the analytic Jacobian with P against
// central differences of the right-hand side, and a reacting adiabatic gas
// bed against GSL's rk8pd integrating the same balances written here. All
// kinetic and physical data are invented for the tests.
#include "rxtrain/models/hydraulics.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/models/tubular_balances.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "test_species.hpp"

using namespace rxtrain;
using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;
using rxtrain::test::make_species;

namespace {

constexpr double kMwA = 0.058, kMwB = 0.029, kMwI = 0.028;  // A -> 2B conserves mass
constexpr double kCpA = 90, kCpB = 40, kCpI = 30;           // J/(mol K)

// A => 2B, first order in A's partial pressure (gas) or concentration
// (liquid), per kg of catalyst: r = k(T) d_A, k = k0 exp(-Ea/R (1/T - 1/T0)).
Mechanism a_to_2b(Phase phase, double k0, double Ea, double T0, double dH) {
  Reaction r;
  r.id = "R";
  r.equation = "A => 2 B";
  r.nu = {-1, 2, 0};
  r.rate.orders = {1, 0, 0};
  r.rate.A = k0;
  r.rate.Ea = Ea;
  r.rate.T_ref = T0;
  r.rate.basis = RateBasis::Catalyst;
  r.rate.driving = phase == Phase::Gas ? Driving::Pressure : Driving::Concentration;
  r.dH_298 = dH;
  return Mechanism(phase,
                   {make_species("A", kCpA, 0.0, 200.0, kMwA, 700),
                    make_species("B", kCpB, 0.0, 150.0, kMwB, 650),
                    make_species("I", kCpI, 0.0, 190.0, kMwI, 800)},
                   {r});
}

ReactorSpec packed_bed(double V, HeatMode heat, double D, double eps, PelletSpec pellet,
                       ViscosityLaw mu) {
  ReactorSpec s;
  s.id = "R1";
  s.heat = heat;
  s.volume = V;
  s.bulk_density = 800;
  s.geometry = BedGeometry{0, D, std::nullopt, eps, {}};
  s.pellet = pellet;
  s.viscosity = mu;
  s.where = {"case.yaml", 12, 5};
  return s;
}

PelletSpec sphere(double d) {
  PelletSpec p;
  p.shape = PelletShape::Sphere;
  p.size = d;
  return p;
}

double area(double D) { return std::numbers::pi / 4 * D * D; }

}  // namespace

TEST_CASE("Ergun's pressure gradient and the pellet's equivalent diameter, worked by hand",
          "[hydraulics]") {
  // Ergun (1952), with his constants 150 and 1.75: G = 2 kg/(m2 s),
  // rho = 4 kg/m3, mu = 2e-5 Pa s, d_p = 5 mm, eps = 0.4:
  //   (1 - eps)/eps^3          = 0.6 / 0.064             = 9.375
  //   150 (1 - eps) mu / d_p   = 150 * 0.6 * 2e-5 / 5e-3 = 0.36
  //   1.75 G                   = 3.5
  //   G / (rho d_p)            = 2 / (4 * 5e-3)          = 100
  //   dP/dz = -100 * 9.375 * (0.36 + 3.5)                = -3618.75 Pa/m
  CHECK(ergun_gradient(2.0, 4.0, 2e-5, 5e-3, 0.4) == Approx(-3618.75).epsilon(1e-12));
  // d_p = 6 V_p / S_p: a cylinder d = 4 mm, L = 6 mm: 3 d L / (2 L + d) =
  // 72 / 16 = 4.5 mm; an infinite one 1.5 d; a slab 3 t; a sphere d.
  PelletSpec p;
  p.shape = PelletShape::Cylinder;
  p.size = 4e-3;
  p.length = 6e-3;
  CHECK(particle_diameter(p) == Approx(4.5e-3).epsilon(1e-12));
  p.length.reset();
  CHECK(particle_diameter(p) == Approx(6e-3).epsilon(1e-12));
  p.shape = PelletShape::Slab;
  CHECK(particle_diameter(p) == Approx(12e-3).epsilon(1e-12));
  CHECK(particle_diameter(sphere(3e-3)) == Approx(3e-3).epsilon(1e-12));
}

TEST_CASE("an isothermal ideal gas without reaction follows P^2 = P0^2 - 2 beta0 P0 z",
          "[hydraulics]") {
  // No A in the feed: no reaction, constant molar flow and T. Then rho =
  // rho0 P / P0 and mu is constant, so Ergun reads dP/dz = -beta0 P0 / P
  // with beta0 = -dP/dz at the inlet; P dP = -beta0 P0 dz integrates to
  // P(z)^2 = P0^2 - 2 beta0 P0 z exactly.
  const Mechanism mech = a_to_2b(Phase::Gas, 1e-7, 60e3, 600, -50e3);
  const double T = 600, P0 = 5e5, D = 1.0, eps = 0.4, d_p = 3e-3, L = 4.0;
  const Stream inlet{T, P0, {0.0, 10.0, 40.0}};
  const ViscosityLaw mu{3e-5, 700, 0.7};  // at T: the law is read at 600 K
  const ReactorSpec spec = packed_bed(area(D) * L, HeatMode::Isothermal, D, eps, sphere(d_p), mu);
  const double mdot = 10 * kMwB + 40 * kMwI;
  const double G = mdot / area(D);
  const double rho0 = P0 * (mdot / 50.0) / (kGasConstant * T);
  const double beta0 = -ergun_gradient(G, rho0, mu.at(T), d_p, eps);
  const double P_exact = std::sqrt(P0 * P0 - 2 * beta0 * P0 * L);
  CHECK(P0 - P_exact > 0.05 * P0);  // a pressure drop that matters

  SunContext ctx;
  PfrOptions tight;
  tight.cvode.rtol = 1e-12;
  tight.cvode.atol = 1e-12;
  const StageResult res = run_pfr(mech, spec, inlet, ConversionBasis{0, 1.0}, ctx, tight);
  CHECK(res.outlet.P == Approx(P_exact).epsilon(1e-8));
  REQUIRE(res.hydraulics);
  CHECK(*res.hydraulics->dP == Approx(P0 - P_exact).epsilon(1e-7));
  CHECK(res.hydraulics->length == Approx(L).epsilon(1e-12));
  CHECK(*res.hydraulics->mass_flux == Approx(G).epsilon(1e-12));
  for (const auto& p : res.profile) {
    REQUIRE(p.P);
    const double z = p.V / area(D);
    CHECK(*p.P == Approx(std::sqrt(P0 * P0 - 2 * beta0 * P0 * z)).epsilon(1e-8));
  }
}

TEST_CASE("an incompressible liquid without reaction loses pressure linearly", "[hydraulics]") {
  // Constant rho (ideal mixing, no reaction), constant mu (isothermal):
  // Ergun's gradient is constant, P(z) = P0 + (dP/dz) z.
  const Mechanism mech = a_to_2b(Phase::Liquid, 1e-7, 60e3, 330, -50e3);
  const double T = 330, P0 = 20e5, D = 0.3, eps = 0.38, d_p = 2e-3, L = 3.0;
  const Stream inlet{T, P0, {0.0, 20.0, 60.0}};
  const ViscosityLaw mu{8e-4, 0, 0};
  const ReactorSpec spec = packed_bed(area(D) * L, HeatMode::Isothermal, D, eps, sphere(d_p), mu);
  const double mdot = 20 * kMwB + 60 * kMwI;
  const double v = 20 * kMwB / 650 + 60 * kMwI / 800;
  const double dPdz = ergun_gradient(mdot / area(D), mdot / v, mu.value, d_p, eps);
  SunContext ctx;
  PfrOptions tight;
  tight.cvode.rtol = 1e-12;
  tight.cvode.atol = 1e-12;
  const StageResult res = run_pfr(mech, spec, inlet, ConversionBasis{0, 1.0}, ctx, tight);
  CHECK(-dPdz * L > 0.01 * P0);
  CHECK(res.outlet.P == Approx(P0 + dPdz * L).epsilon(1e-10));
}

TEST_CASE("the analytic Jacobian with pressure agrees with central differences", "[hydraulics]") {
  // Central differences of the right-hand side (second-order numerical
  // differentiation) at a state inside a bed, dense and sparse forms.
  for (const Phase phase : {Phase::Gas, Phase::Liquid}) {
    for (const HeatMode heat : {HeatMode::Adiabatic, HeatMode::Isothermal}) {
      INFO((phase == Phase::Gas ? "gas" : "liquid")
           << (heat == HeatMode::Adiabatic ? " adiabatic" : " isothermal"));
      const Mechanism mech = a_to_2b(phase, phase == Phase::Gas ? 1e-7 : 1e-5, 60e3, 600, -50e3);
      detail::HydraulicBinding h{0.2, 1.7, 3e-3, 0.4, ViscosityLaw{3e-5, 700, 0.7}};
      const std::vector<double> beta{800.0};
      detail::PfrSystem sys;
      sys.reset(mech, beta, heat, 5e5, nullptr, &h);
      const int N = sys.size();
      REQUIRE(N == 6);
      const std::vector<double> y{6.0, 7.0, 40.0, 640.0, 1234.0, 4.2e5};
      std::vector<double> J(N * N), fp(N), fm(N);
      REQUIRE(sys.jac(y.data(), J.data()) == 0);
      SparsePattern pat;
      sys.build_pattern(pat);
      std::vector<double> values(pat.nonzeros()), u(N, 0.0), w(N, 0.0);
      REQUIRE(sys.sparse_jac(y.data(), values.data(), u.data(), w.data()) == 0);
      std::vector<double> S(N * N, 0.0);
      for (int k = 0; k < N; ++k)
        for (int p = pat.col_start[k]; p < pat.col_start[k + 1]; ++p)
          S[pat.row[p] + N * k] = values[p];
      for (int k = 0; k < N; ++k)
        for (int i = 0; i < N; ++i) S[i + N * k] += u[i] * w[k];
      for (int k = 0; k < N; ++k) {
        const double step = 1e-6 * std::max(std::abs(y[k]), 1.0);
        std::vector<double> yp = y, ym = y;
        yp[k] += step;
        ym[k] -= step;
        REQUIRE(sys.rhs(yp.data(), fp.data()) == 0);
        REQUIRE(sys.rhs(ym.data(), fm.data()) == 0);
        for (int i = 0; i < N; ++i) {
          const double fd = (fp[i] - fm[i]) / (2 * step);
          INFO("row " << i << " column " << k);
          const double scale = std::max(std::abs(fd), 1e-9 * std::abs(fp[i]) / step + 1e-12);
          CHECK(std::abs(J[i + N * k] - fd) <= 1e-6 * scale + 1e-10);
          CHECK(std::abs(S[i + N * k] - fd) <= 1e-6 * scale + 1e-10);
        }
      }
      // The pressure column is not empty for a gas (rates read P).
      if (phase == Phase::Gas) CHECK(J[0 + N * 5] != 0.0);
    }
  }
}

TEST_CASE("a reacting adiabatic gas bed with pressure drop agrees with GSL", "[hydraulics]") {
  // States F_A, F_B, T, P along V; r = rho_b k(T) y_A P per m3 of bed,
  // dH(T) = dH_298 + (2 cp_B - cp_A)(T - 298.15) (Kirchhoff), and Ergun
  // for dP/dV = (dP/dz) / A at the local density P M / (R T) and mu(T).
  GslNoAbort no_abort;
  constexpr double k0 = 1e-7, Ea = 60e3, T0 = 600, dH298 = -50e3, rho_b = 800;
  const Mechanism mech = a_to_2b(Phase::Gas, k0, Ea, T0, dH298);
  const double D = 0.6, eps = 0.4, d_p = 3e-3, V_end = 0.6, FI = 40;
  const ViscosityLaw mu{3.3e-5, 700, 0.7};
  const Stream inlet{T0, 5e5, {10.0, 0.0, FI}};
  const double A = area(D), mdot = 10 * kMwA + FI * kMwI, G = mdot / A;
  GslOde ode(4, [&](double, const double* y, double* dy) {
    const double FA = y[0], FB = y[1], T = y[2], P = y[3];
    const double Ft = FA + FB + FI;
    const double k = k0 * std::exp(-Ea / kGasConstant * (1 / T - 1 / T0));
    const double r = rho_b * k * FA / Ft * P;
    const double dH = dH298 + (2 * kCpB - kCpA) * (T - kReferenceT);
    const double rho = P * (mdot / Ft) / (kGasConstant * T);
    const double mu_T = mu.value * std::pow(T / mu.T_ref, mu.exponent);
    dy[0] = -r;
    dy[1] = 2 * r;
    dy[2] = -dH * r / (FA * kCpA + FB * kCpB + FI * kCpI);
    dy[3] = -(G / (rho * d_p)) * ((1 - eps) / (eps * eps * eps)) *
            (150 * (1 - eps) * mu_T / d_p + 1.75 * G) / A;
  });
  SunContext ctx;
  PfrOptions tight;
  tight.cvode.rtol = 1e-11;
  tight.cvode.atol = 1e-12;
  const ReactorSpec spec = packed_bed(V_end, HeatMode::Adiabatic, D, eps, sphere(d_p), mu);
  // Both forms of the Jacobian (dense, and the sparse KLU one large
  // mechanisms use) must integrate to the same bed.
  const auto form = GENERATE(JacobianForm::Dense, JacobianForm::Sparse);
  tight.jacobian = form;
  INFO((form == JacobianForm::Dense ? "dense" : "sparse"));
  const StageResult res = run_pfr(mech, spec, inlet, ConversionBasis{0, 10.0}, ctx, tight);
  std::vector<double> y{10.0, 0.0, T0, 5e5};
  double V_prev = 0;
  int compared = 0;
  for (const auto& p : res.profile) {
    if (p.V > V_prev) ode.advance(V_prev, p.V, y);
    V_prev = p.V;
    INFO("V = " << p.V);
    REQUIRE(p.P);
    CHECK(p.F[0] == Approx(y[0]).epsilon(1e-7));
    CHECK(p.T == Approx(y[2]).epsilon(1e-7));
    CHECK(*p.P == Approx(y[3]).epsilon(1e-7));
    ++compared;
  }
  CHECK(compared >= 2);
  CHECK(res.outlet.P == Approx(y[3]).epsilon(1e-7));
  // The bed reacts and loses pressure enough for both to matter.
  CHECK(res.conversion > 0.3);
  CHECK(res.conversion < 0.99);
  CHECK(5e5 - res.outlet.P > 0.1e5);
}

TEST_CASE("a bed whose pressure would fall below a tenth of its inlet stops with an error",
          "[hydraulics]") {
  const Mechanism mech = a_to_2b(Phase::Gas, 1e-7, 60e3, 600, -50e3);
  const Stream inlet{600, 2e5, {0.0, 10.0, 40.0}};
  const ReactorSpec spec = packed_bed(area(0.2) * 100, HeatMode::Isothermal, 0.2, 0.35,
                                      sphere(1e-3), ViscosityLaw{3e-5, 0, 0});
  SunContext ctx;
  try {
    run_pfr(mech, spec, inlet, ConversionBasis{0, 1.0}, ctx, PfrOptions{});
    FAIL("no error");
  } catch (const InfeasibleError& e) {
    const std::string m = e.what();
    CHECK_THAT(m, Catch::Contains("stage R1: the pressure falls below a tenth of its inlet"));
    CHECK_THAT(m, Catch::Contains("m into the bed"));
  }
}

TEST_CASE("diameter: auto finds the smallest diameter whose pressure drop is dP_max",
          "[hydraulics]") {
  // The stage's own result checked by re-rating: at the diameter found
  // the pressure drop is dP_max (to 1e-6 relative), and a diameter 1e-4
  // smaller exceeds it (dP falls as the diameter grows).
  const Mechanism mech = a_to_2b(Phase::Gas, 1e-7, 60e3, 600, -50e3);
  const Stream inlet{600, 5e5, {10.0, 0.0, 40.0}};
  ReactorSpec spec =
      packed_bed(0.6, HeatMode::Adiabatic, 0.6, 0.4, sphere(3e-3), ViscosityLaw{3.3e-5, 700, 0.7});
  const double dP_max = 0.3e5;
  spec.geometry->dP_max = dP_max;
  SunContext ctx;
  PfrOptions tight;
  tight.cvode.rtol = 1e-10;
  tight.cvode.atol = 1e-12;
  const ConversionBasis basis{0, 10.0};
  const StageResult res = run_pfr(mech, spec, inlet, basis, ctx, tight);
  REQUIRE(res.hydraulics);
  const double D = res.hydraulics->geometry.diameter;
  CHECK(*res.hydraulics->dP == Approx(dP_max).epsilon(1e-6));
  CHECK(*res.hydraulics->dP <= dP_max);
  ReactorSpec rated = spec;
  rated.geometry->dP_max.reset();
  rated.geometry->diameter = D;
  CHECK(*run_pfr(mech, rated, inlet, basis, ctx, tight).hydraulics->dP ==
        Approx(dP_max).epsilon(1e-6));
  rated.geometry->diameter = D * (1 - 1e-4);
  CHECK(*run_pfr(mech, rated, inlet, basis, ctx, tight).hydraulics->dP > dP_max);
}

TEST_CASE("a bed warns of a pressure drop above 10 % and of a Reynolds number outside Ergun's data",
          "[hydraulics]") {
  // The thresholds: 10 % of the inlet pressure (common practice, no
  // source) and a modified particle Reynolds number G d_p / (mu (1 - eps))
  // of about 1 to 2000 (Ergun's data, from memory).
  const Mechanism mech = a_to_2b(Phase::Gas, 1e-7, 60e3, 600, -50e3);
  const Stream inlet{600, 5e5, {0.0, 10.0, 40.0}};
  SunContext ctx;
  auto warnings_of = [&](double D, double mu) {
    const ReactorSpec spec = packed_bed(area(D) * 4.0, HeatMode::Isothermal, D, 0.4, sphere(3e-3),
                                        ViscosityLaw{mu, 0, 0});
    std::string all;
    for (const auto& w :
         run_pfr(mech, spec, inlet, ConversionBasis{0, 1.0}, ctx, PfrOptions{}).warnings)
      all += w + "\n";
    return all;
  };
  // D = 1 m: a drop of about 6 % (see the P^2 test), Re_p / (1 - eps) about 300.
  const std::string quiet = warnings_of(1.0, 3e-5);
  CHECK(quiet.find("pressure drop") == std::string::npos);
  CHECK(quiet.find("Reynolds") == std::string::npos);
  const std::string narrow = warnings_of(0.7, 3e-5);
  CHECK_THAT(narrow, Catch::Contains("% of the inlet pressure (above 10 %, common practice"));
  const std::string thin = warnings_of(1.0, 1e-7);
  CHECK_THAT(thin, Catch::Contains("outside the range of Ergun's 1952 data"));
}
