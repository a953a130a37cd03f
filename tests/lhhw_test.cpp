// Tubular beds with an adsorption-inhibited (Langmuir-Hinshelwood-Hougen-
// Watson) rate law, r = k c / (1 + K c): against the closed-form design
// equation of an isothermal bed and against GSL odeiv2 for an adiabatic
// one; validate_case's rules for adsorption terms. All kinetic and
// physical data here are invented for the tests.
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "input_error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "test_species.hpp"

using namespace rxtrain;
using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;

namespace {

Species species(const std::string& id, double cp, double mw, double density) {
  return test::make_species(id, cp, 0.0, 100.0, mw, density);
}

// Liquid A -> B in solvent S, r = k(T) C_A / (1 + K_A(T) C_A); A and B
// have equal molar volumes, so the volumetric flow is constant.
struct Inhibited {
  double A = 0, Ea = 0, T_ref = 0;       // k(T) = A exp(-Ea/R (1/T - 1/T_ref))
  double K = 0, dH_ads = 0, K_Tref = 0;  // K_A(T) = K exp(-dH_ads/R (1/T - 1/K_Tref))
  double dH = 0;                         // heat of reaction at 298.15 K, J/mol
  std::vector<double> cp;                // A, B, S; J/(mol K)

  Mechanism mechanism() const {
    Reaction r;
    r.id = "R";
    r.equation = "A => B";
    r.nu = {-1, 1, 0};
    r.rate.orders = {1, 0, 0};
    r.rate.A = A;
    r.rate.Ea = Ea;
    r.rate.T_ref = T_ref;
    Adsorption ads;
    AdsorptionTerm t;
    t.K = K;
    t.dH = dH_ads;
    t.T_ref = K_Tref;
    t.powers = {1, 0, 0};
    ads.terms = {t};
    r.rate.adsorption = ads;
    r.dH_298 = dH;
    return Mechanism(Phase::Liquid,
                     {species("A", cp[0], 0.1, 900), species("B", cp[1], 0.1, 900),
                      species("S", cp[2], 0.018, 1000)},
                     {r});
  }
};

ReactorSpec volume_spec(double V, HeatMode heat) {
  ReactorSpec s;
  s.id = "R1";
  s.heat = heat;
  s.volume = V;
  s.where = {"case.yaml", 12, 5};
  return s;
}

// k tau reaches 5 here; the integration error grows with it and falls in
// proportion to rtol (measured worst relative error in F_A along the
// isothermal bed: 1.0e-8 at rtol 1e-10, 1.5e-9 at 1e-11), so the checks
// to 1e-8 run at rtol 1e-11.
PfrOptions tight() {
  PfrOptions o;
  o.cvode.rtol = 1e-11;
  o.cvode.atol = 1e-14;
  return o;
}

}  // namespace

// Design equation (derived here). At constant volumetric flow v, F_A = v c
// and dF_A/dV = -r, so v dc/dV = -k c / (1 + K c). With tau = V / v:
//   k dtau = -(1 + K c) / c dc = -(1/c + K) dc
// and integrating from c0 (tau = 0) to c = c0 (1 - X):
//   k tau = ln(c0 / c) + K (c0 - c) = -ln(1 - X) + K c0 X.
// (The one-site Langmuir-Hinshelwood design equation: the first-order
// result plus the inhibition's linear term.)
TEST_CASE("isothermal tubular bed with r = k c/(1 + K c) follows k tau = -ln(1-X) + K c0 X",
          "[lhhw]") {
  const double T = 340;
  Inhibited law;
  law.A = 2.0e-3;  // k(340 K) = 2e-3 1/s
  law.Ea = 55e3;
  law.T_ref = T;
  law.dH_ads = -30e3;  // K(T) = K at T = K_Tref: the isothermal law has K exactly
  law.K_Tref = T;
  law.dH = -30e3;
  law.cp = {150, 160, 75};
  const double FA0 = 2.0;
  const double v = FA0 * 0.1 / 900 + 30 * 0.018 / 1000;
  const double c0 = FA0 / v;
  law.K = 3.0 / c0;  // K c0 = 3: the inhibition more than doubles the volume
  const Mechanism mech = law.mechanism();
  const Stream inlet{T, 3e5, {FA0, 0.0, 30.0}};
  const ConversionBasis basis{0, FA0};
  const double k = law.A;
  const double X_end = 0.9;
  const double V = v / k * (-std::log(1 - X_end) + law.K * c0 * X_end);
  SunContext ctx;
  const StageResult res =
      run_pfr(mech, volume_spec(V, HeatMode::Isothermal), inlet, basis, ctx, tight());
  CHECK(res.conversion == Approx(X_end).epsilon(1e-8));
  REQUIRE(res.profile.size() > 5);
  // Along the bed, F_A / F_A0 = y solves -ln y + K c0 (1 - y) = k tau
  // (Newton to round-off; the left side falls monotonically in y), so that
  // F_A is compared without the cancellation of X = 1 - F_A/F_A0 near the
  // inlet.
  auto y_exact = [&](double k_tau) {
    double y = std::exp(-k_tau / (1 + law.K * c0));
    for (int it = 0; it < 100; ++it) {
      const double g = -std::log(y) + law.K * c0 * (1 - y) - k_tau;
      const double step = g / (-1 / y - law.K * c0);
      y -= step;
      if (std::abs(step) <= 1e-16 * y) break;
    }
    return y;
  };
  for (const auto& p : res.profile) {
    INFO("V = " << p.V << " X = " << p.X);
    CHECK(p.F[0] == Approx(FA0 * y_exact(k * p.V / v)).epsilon(1e-8));
  }
  // Sized to the same conversion, the volume is the design equation's.
  ReactorSpec sized = volume_spec(0, HeatMode::Isothermal);
  sized.volume.reset();
  sized.target_conversion = X_end;
  const StageResult s = run_pfr(mech, sized, inlet, basis, ctx, tight());
  REQUIRE(s.sized);
  CHECK(*s.volume == Approx(V).epsilon(1e-8));
}

// The same law with K_A(T) falling as T rises, in an adiabatic liquid bed,
// written out again for GSL's rk8pd (y = [F_A, T]) and compared at every
// CVODE profile point.
TEST_CASE("adiabatic tubular bed with r = k c/(1 + K(T) c) agrees with GSL rk8pd", "[lhhw]") {
  GslNoAbort no_abort;
  const double T0 = 320;
  Inhibited law;
  law.A = 5e-4;  // k(320 K), 1/s
  law.Ea = 75e3;
  law.T_ref = T0;
  law.dH_ads = -40e3;
  law.K_Tref = T0;
  law.dH = -70e3;
  law.cp = {150, 170, 75};
  const double FA0 = 4.0, FS = 40.0;
  const double v = FA0 * 0.1 / 900 + FS * 0.018 / 1000;
  law.K = 2.0 / (FA0 / v);  // K c0 = 2 at the inlet temperature
  const Mechanism mech = law.mechanism();
  const Stream inlet{T0, 2e5, {FA0, 0.0, FS}};
  const ConversionBasis basis{0, FA0};
  const double V_end = 4.0;

  GslOde ode(2, [&](double, const double* y, double* dy) {
    const double FA = y[0], T = y[1];
    const double FB = FA0 - FA;
    const double c = FA / v;
    const double k = law.A * std::exp(-law.Ea / kGasConstant * (1 / T - 1 / law.T_ref));
    const double K = law.K * std::exp(-law.dH_ads / kGasConstant * (1 / T - 1 / law.K_Tref));
    const double rate = k * c / (1 + K * c);
    const double dH = law.dH + (law.cp[1] - law.cp[0]) * (T - kReferenceT);  // Kirchhoff
    dy[0] = -rate;
    dy[1] = -dH * rate / (FA * law.cp[0] + FB * law.cp[1] + FS * law.cp[2]);
  });

  SunContext ctx;
  const StageResult res =
      run_pfr(mech, volume_spec(V_end, HeatMode::Adiabatic), inlet, basis, ctx, tight());
  REQUIRE(res.conversion > 0.5);
  std::vector<double> y{FA0, T0};
  double V_prev = 0;
  int compared = 0;
  for (const auto& p : res.profile) {
    if (p.V > V_prev) ode.advance(V_prev, p.V, y);
    V_prev = p.V;
    const double X_ref = 1 - y[0] / FA0;
    INFO("V = " << p.V);
    CHECK(p.T == Approx(y[1]).epsilon(1e-7));
    CHECK(p.X == Approx(X_ref).epsilon(1e-7).margin(1e-9));
    ++compared;
  }
  CHECK(compared > 10);
  CHECK(res.outlet.T == Approx(y[1]).epsilon(1e-7));
  CHECK(res.conversion == Approx(1 - y[0] / FA0).epsilon(1e-7));
}

// A case built in code (a sweep point, a layout) passes the loader's rules
// through validate_case: an adsorption term the loader would refuse is
// refused there too, at the reaction.
TEST_CASE("validate_case refuses adsorption terms the loader refuses", "[lhhw]") {
  const UnitParser units;
  const Case base =
      load_case(RXTRAIN_SOURCE_DIR "/tools/bench-cases/so2-three-bed-lhhw.yaml", units);
  validate_case(base);
  auto with = [&](const std::function<void(Adsorption&)>& change) {
    Case c = base;
    std::vector<Reaction> rx = c.mechanism.reactions();
    change(*rx[0].rate.adsorption);
    c.mechanism = Mechanism(c.mechanism.phase(), c.mechanism.species(), rx);
    return rxtrain::test::input_error([&] { validate_case(c); });
  };
  CHECK_THAT(with([](Adsorption& a) { a.exponent = -1; }),
             Catch::Contains("exponent of adsorption of rate of reaction ox must be positive"));
  CHECK_THAT(with([](Adsorption& a) { a.terms[1].K = 0; }),
             Catch::Contains("K of adsorption term 2 of rate of reaction ox must be positive"));
  CHECK_THAT(with([](Adsorption& a) { a.terms[0].powers[2] = -1; }),
             Catch::Contains("power of SO3 in term 1"));
  CHECK_THAT(with([](Adsorption& a) { a.terms[0].powers.assign(4, 0.0); }),
             Catch::Contains("needs at least one species with a positive power"));
}
