// Stirred-tank stage against closed forms of the ideal-CSTR balances and
// against steady states found independently with GSL's Brent root finder.
// Every mechanism below is invented for the test (no data from elsewhere).
#include "rxtrain/stages/cstr.hpp"

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "s_curve_tank.hpp"

namespace {

using rxtrain::ConversionBasis;
using rxtrain::CpConstant;
using rxtrain::HeatMode;
using rxtrain::kGasConstant;
using rxtrain::Mechanism;
using rxtrain::Phase;
using rxtrain::Reaction;
using rxtrain::ReactorSpec;
using rxtrain::ReactorType;
using rxtrain::Species;
using rxtrain::StageResult;
using rxtrain::Stream;
using rxtrain::SunContext;
using rxtrain::ThermoModel;

Species species(const std::string& id, double cp, double mw, double density) {
  Species s;
  s.id = id;
  s.name = id;
  s.mw = mw;
  s.density = density;
  s.thermo = ThermoModel(CpConstant{cp}, std::nullopt, std::nullopt);
  return s;
}

// Arrhenius with k = k_ref at T_ref.
Reaction reaction(const std::string& id, std::vector<double> nu, std::vector<double> orders,
                  double k_ref, double Ea, double T_ref, double dH_298) {
  Reaction r;
  r.id = id;
  r.equation = id;
  r.nu = std::move(nu);
  r.rate.A = k_ref;
  r.rate.Ea = Ea;
  r.rate.T_ref = T_ref;
  r.rate.orders = std::move(orders);
  r.dH_298 = dH_298;
  return r;
}

ReactorSpec tank(HeatMode heat, std::optional<double> V, std::optional<double> X = {}) {
  ReactorSpec s;
  s.id = "R2";
  s.type = ReactorType::Cstr;
  s.heat = heat;
  s.volume = V;
  s.target_conversion = X;
  s.where = {"case.yaml", 7, 3};
  return s;
}

double rel(double a, double b) { return std::abs(a - b) / std::abs(b); }

// --- The adiabatic A -> B liquid tank with an S-shaped heat-generation
// curve (invented): pure A, 10 mol/s, 1e-4 m3/mol for A and B, cp 150 J/(mol K)
// for both (dCp = 0), dH = -30 kJ/mol, k = 1 1/s at 350 K, Ea/R = 12000 K.
// Adiabatic rise for full conversion J = -dH / cp = 200 K.
constexpr double kS_T0 = 300.0;
constexpr double kS_J = 200.0;
constexpr double kS_ER = 12000.0;
constexpr double kS_v0 = 1e-3;  // m3/s

Mechanism s_curve_mechanism() {
  return Mechanism(Phase::Liquid, {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000)},
                   {reaction("r1", {-1, 1}, {1, 0}, 1.0, kS_ER * kGasConstant, 350.0, -30000.0)});
}

double s_curve_k(double T) { return std::exp(-kS_ER * (1.0 / T - 1.0 / 350.0)); }

struct SCurveParams {
  double tau;
};

// Energy balance with the mole balance X = k tau / (1 + k tau) substituted
// (mole and energy balances of an ideal adiabatic CSTR, first order).
double s_curve_residual(double T, void* p) {
  const double tau = static_cast<SCurveParams*>(p)->tau;
  const double kt = s_curve_k(T) * tau;
  return T - kS_T0 - kS_J * kt / (1 + kt);
}

// Every root in [T0, T0 + J + 1] by a scan for sign changes and GSL Brent.
std::vector<double> gsl_steady_states(double tau) {
  std::unique_ptr<gsl_root_fsolver, decltype(&gsl_root_fsolver_free)> solver(
      gsl_root_fsolver_alloc(gsl_root_fsolver_brent), &gsl_root_fsolver_free);
  REQUIRE(solver);
  SCurveParams params{tau};
  gsl_function fn{&s_curve_residual, &params};
  std::vector<double> roots;
  const double dT = 0.01;
  for (double a = kS_T0; a < kS_T0 + kS_J + 1; a += dT) {
    const double b = a + dT;
    if ((s_curve_residual(a, &params) > 0) == (s_curve_residual(b, &params) > 0)) continue;
    REQUIRE(gsl_root_fsolver_set(solver.get(), &fn, a, b) == GSL_SUCCESS);
    int status = GSL_CONTINUE;
    for (int it = 0; it < 200 && status == GSL_CONTINUE; ++it) {
      gsl_root_fsolver_iterate(solver.get());
      status = gsl_root_test_interval(gsl_root_fsolver_x_lower(solver.get()),
                                      gsl_root_fsolver_x_upper(solver.get()), 1e-12, 0);
    }
    REQUIRE(status == GSL_SUCCESS);
    roots.push_back(gsl_root_fsolver_root(solver.get()));
  }
  return roots;
}

}  // namespace

TEST_CASE("isothermal first-order liquid CSTR matches X = k tau / (1 + k tau)", "[cstr]") {
  // Mole balance of an ideal CSTR, first order, closed form:
  // F_A0 X = V k C_A0 (1 - X)  =>  X = k tau / (1 + k tau), tau = V / v0.
  const double k = 0.3, dH = -50000.0;
  const Mechanism mech(Phase::Liquid, {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000)},
                       {reaction("r1", {-1, 1}, {1, 0}, k, 40000.0, 350.0, dH)});
  const Stream in{350.0, 2e5, {10.0, 0.0}};
  const double v0 = 10.0 * 0.1 / 1000;
  const double V = 2e-3, tau = V / v0;
  SunContext ctx;
  const StageResult r = rxtrain::run_cstr(mech, tank(HeatMode::Isothermal, V), in, {0, 10.0}, ctx);
  const double X = k * tau / (1 + k * tau);
  CHECK(rel(r.conversion, X) < 1e-8);
  CHECK(r.outlet.T == in.T);
  // Heat added to hold T: extent times dH (energy balance of an isothermal
  // tank with dH independent of T here, dCp = 0).
  CHECK(rel(r.duty, 10.0 * X * dH) < 1e-8);
  CHECK(r.duty < 0);
  CHECK(r.kind == rxtrain::StageKind::Cstr);
  REQUIRE(r.profile.size() == 2);
  CHECK(r.profile[0].V == 0);
  CHECK(r.profile[1].V == V);
  CHECK(r.profile[1].X == r.conversion);
  CHECK(r.space_time.has_value());
  CHECK(rel(*r.space_time, tau) < 1e-12);
  CHECK(r.steady_states.size() == 1);
  CHECK(r.warnings.empty());
}

TEST_CASE("second-order CSTR with equimolar feed matches k tau C0 (1 - X)^2 = X", "[cstr]") {
  // Mole balance of an ideal CSTR, second order A + B -> C with C_A0 = C_B0,
  // closed form: k tau C0 (1 - X)^2 = X, the smaller root of
  // a X^2 - (2a + 1) X + a = 0 with a = k tau C0.
  // Molar volumes add up (C's is A's plus B's), so v stays v0.
  const double k = 1e-5;  // m3/(mol s)
  const Mechanism mech(
      Phase::Liquid,
      {species("A", 100, 0.05, 1000), species("B", 100, 0.05, 1000), species("C", 200, 0.1, 1000)},
      {reaction("r1", {-1, -1, 1}, {1, 1, 0}, k, 30000.0, 320.0, -40000.0)});
  const Stream in{320.0, 2e5, {5.0, 5.0, 0.0}};
  const double v0 = 10.0 * 5e-5, C0 = 5.0 / v0;
  const double V = 1e-3, tau = V / v0;
  SunContext ctx;
  const StageResult r = rxtrain::run_cstr(mech, tank(HeatMode::Isothermal, V), in, {0, 5.0}, ctx);
  const double a = k * tau * C0;
  const double X = ((2 * a + 1) - std::sqrt(4 * a + 1)) / (2 * a);
  CHECK(rel(r.conversion, X) < 1e-8);
  CHECK(std::abs(k * tau * C0 * (1 - r.conversion) * (1 - r.conversion) - r.conversion) < 1e-8);
}

TEST_CASE("reversible first-order CSTR matches its closed form", "[cstr]") {
  // Mole balance of an ideal CSTR, A <-> B with r = k (C_A - C_B / K),
  // closed form: X = k tau / (1 + k tau (1 + 1/K)).
  const double k = 0.4, K = 3.0;
  Reaction rx = reaction("r1", {-1, 1}, {1, 0}, k, 0.0, 350.0, 0.0);
  rx.reversible = true;
  rx.equilibrium.kind = rxtrain::EquilibriumSource::Kind::VantHoff;
  rx.equilibrium.K_ref = K;
  rx.equilibrium.T_ref = 350.0;
  const Mechanism mech(Phase::Liquid, {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000)},
                       {rx});
  const Stream in{350.0, 2e5, {10.0, 0.0}};
  const double V = 5e-3, tau = V / 1e-3;
  SunContext ctx;
  const StageResult r = rxtrain::run_cstr(mech, tank(HeatMode::Isothermal, V), in, {0, 10.0}, ctx);
  CHECK(rel(r.conversion, k * tau / (1 + k * tau * (1 + 1 / K))) < 1e-8);

  SECTION("a target beyond equilibrium is infeasible, located, naming the most it can reach") {
    // Equilibrium of A <-> B: X_eq = K / (1 + K) = 0.75.
    try {
      rxtrain::run_cstr(mech, tank(HeatMode::Isothermal, std::nullopt, 0.9), in, {0, 10.0}, ctx);
      FAIL("expected an InfeasibleError");
    } catch (const rxtrain::InfeasibleError& e) {
      const std::string what = e.what();
      INFO(what);
      CHECK(what.find("case.yaml:7:3: error:") == 0);
      CHECK(what.find("R2") != std::string::npos);
      CHECK(what.find("0.9000") != std::string::npos);
      CHECK(what.find("the most this stage can reach is X = 0.7500") != std::string::npos);
    }
  }
  SECTION("a target below the inlet conversion is an input error") {
    CHECK_THROWS_AS(
        rxtrain::run_cstr(mech, tank(HeatMode::Isothermal, std::nullopt, 0.0), in, {0, 10.0}, ctx),
        rxtrain::InputError);
  }
}

TEST_CASE("per-catalyst gas-phase CSTR uses the bulk density", "[cstr]") {
  // Mole balance of an ideal CSTR, first order, closed form, with the rate per
  // kg of catalyst times the bulk density: X = k rho_b tau / (1 + k rho_b tau).
  // A -> B in the gas phase keeps the mole number, so v = F R T / P stays v0.
  const double k = 1e-4;  // m3/(kg s)
  Reaction rx = reaction("r1", {-1, 1}, {1, 0}, k, 60000.0, 500.0, -20000.0);
  rx.rate.basis = rxtrain::RateBasis::Catalyst;
  const Mechanism mech(Phase::Gas, {species("A", 40, 0.05, 1), species("B", 40, 0.05, 1)}, {rx});
  const Stream in{500.0, 1e5, {1.0, 0.0}};
  ReactorSpec spec = tank(HeatMode::Isothermal, 0.1);
  spec.bulk_density = 800.0;
  SunContext ctx;
  const StageResult r = rxtrain::run_cstr(mech, spec, in, {0, 1.0}, ctx);
  const double v0 = 1.0 * kGasConstant * 500.0 / 1e5;
  const double krt = k * 800.0 * 0.1 / v0;
  CHECK(rel(r.conversion, krt / (1 + krt)) < 1e-8);
  REQUIRE(r.catalyst_mass.has_value());
  CHECK(rel(*r.catalyst_mass, 80.0) < 1e-14);

  spec.bulk_density.reset();
  CHECK_THROWS_AS(rxtrain::run_cstr(mech, spec, in, {0, 1.0}, ctx), rxtrain::InputError);
}

TEST_CASE("adiabatic first-order CSTR satisfies mole and energy balances together", "[cstr]") {
  // Energy balance of an adiabatic CSTR with dCp = 0:
  //   T - T0 = (-dH) X / sum_i Theta_i cp_i   (Theta_i = F_i0 / F_A0),
  // mole balance of an ideal CSTR, first order: X = k(T) tau / (1 + k(T) tau).
  // Invented: A -> B (cp 150), inert I (cp 75), equal moles of A and I.
  const double dH = -20000.0, ER = 6000.0, T0 = 320.0;
  const Mechanism mech(
      Phase::Liquid,
      {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000), species("I", 75, 0.018, 1000)},
      {reaction("r1", {-1, 1, 0}, {1, 0, 0}, 0.5, ER * kGasConstant, 350.0, dH)});
  const Stream in{T0, 3e5, {5.0, 0.0, 5.0}};
  const double v0 = 5.0 * 1e-4 + 5.0 * 1.8e-5;
  const double V = 1e-3, tau = V / v0;
  SunContext ctx;
  const StageResult r = rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, V), in, {0, 5.0}, ctx);
  const double X = r.conversion, T = r.outlet.T;
  const double sum_theta_cp = 1.0 * 150 + 1.0 * 75;
  CHECK(rel(T - T0, -dH * X / sum_theta_cp) < 1e-8);
  const double kt = 0.5 * std::exp(-ER * (1 / T - 1 / 350.0)) * tau;
  CHECK(rel(X, kt / (1 + kt)) < 1e-8);
  CHECK(X > 0.5);  // a real reaction, not the trivial feed state
  CHECK(r.duty == 0);
  CHECK(r.T_max == T);
  CHECK(r.T_min == T0);
  CHECK(r.steady_states.size() == 1);
}

TEST_CASE("adiabatic CSTR with three steady states finds them and reports the feed branch",
          "[cstr]") {
  const Mechanism mech = s_curve_mechanism();
  const Stream in{kS_T0, 2e5, {10.0, 0.0}};
  SunContext ctx;

  // tau = 1 s lies inside the multiplicity region (GSL finds three roots).
  const double tau = 1.0;
  const std::vector<double> ref = gsl_steady_states(tau);
  REQUIRE(ref.size() == 3);
  const StageResult r =
      rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, tau * kS_v0), in, {0, 10.0}, ctx);
  REQUIRE(r.steady_states.size() >= 2);
  for (const auto& s : r.steady_states) {
    // Each state satisfies both balances (see s_curve_residual).
    const double kt = s_curve_k(s.T) * tau;
    CHECK(std::abs(s.X - kt / (1 + kt)) < 1e-8);
    CHECK(rel(s.T - kS_T0, kS_J * s.X) < 1e-8);
    // ... and is one of the roots GSL found.
    double nearest = 1e300;
    for (double t : ref) nearest = std::min(nearest, rel(s.T, t));
    CHECK(nearest < 1e-7);
  }
  // Started from the feed, the tank stays on the low (unignited) branch.
  CHECK(rel(r.outlet.T, ref.front()) < 1e-7);
  REQUIRE(!r.warnings.empty());
  const std::string w = r.warnings.front();
  CHECK(w.find("stage R2: " + std::to_string(r.steady_states.size()) + " steady states found") ==
        0);
  CHECK(w.find("reporting the one reached from the feed by continuation in volume") !=
        std::string::npos);

  SECTION("past the ignition point continuation jumps to the only (upper) state") {
    const double tau_big = 10.0;
    const std::vector<double> ref_big = gsl_steady_states(tau_big);
    REQUIRE(ref_big.size() == 1);
    const StageResult rb =
        rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, tau_big * kS_v0), in, {0, 10.0}, ctx);
    CHECK(rel(rb.outlet.T, ref_big.front()) < 1e-7);
    CHECK(rb.steady_states.size() == 1);
    CHECK(rb.T_max == rb.outlet.T);
  }
}

TEST_CASE("sizing a single-reaction CSTR round-trips through rating", "[cstr]") {
  // Same tank as the adiabatic balance test. Sizing closed form (energy
  // balance of an adiabatic CSTR, dCp = 0, and the first-order mole
  // balance): T = T0 + (-dH) X / sum Theta cp, V = v0 X / (k(T) (1 - X)).
  const double dH = -20000.0, ER = 6000.0, T0 = 320.0;
  const Mechanism mech(
      Phase::Liquid,
      {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000), species("I", 75, 0.018, 1000)},
      {reaction("r1", {-1, 1, 0}, {1, 0, 0}, 0.5, ER * kGasConstant, 350.0, dH)});
  const Stream in{T0, 3e5, {5.0, 0.0, 5.0}};
  const double v0 = 5.0 * 1e-4 + 5.0 * 1.8e-5;
  SunContext ctx;
  const StageResult sized =
      rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, std::nullopt, 0.8), in, {0, 5.0}, ctx);
  REQUIRE(sized.volume.has_value());
  CHECK(sized.sized);
  CHECK(rel(sized.conversion, 0.8) < 1e-12);
  const double T = T0 - dH * 0.8 / 225.0;
  CHECK(rel(sized.outlet.T, T) < 1e-10);
  const double k = 0.5 * std::exp(-ER * (1 / T - 1 / 350.0));
  CHECK(rel(*sized.volume, v0 * 0.8 / (k * 0.2)) < 1e-9);

  const StageResult rated =
      rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, *sized.volume), in, {0, 5.0}, ctx);
  CHECK(std::abs(rated.conversion - 0.8) < 1e-8);
}

TEST_CASE("sizing a CSTR with reactions in series solves V, T and F together", "[cstr]") {
  // Mole balances of an ideal CSTR, A -> B -> C, first order, isothermal,
  // closed form: X_A = k1 tau / (1 + k1 tau), so tau = X / (k1 (1 - X)), and
  // F_B / F_A0 = k1 tau / ((1 + k1 tau)(1 + k2 tau)).
  const double k1 = 0.2, k2 = 0.1;
  const Mechanism mech(
      Phase::Liquid,
      {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000), species("C", 150, 0.1, 1000)},
      {reaction("r1", {-1, 1, 0}, {1, 0, 0}, k1, 50000.0, 350.0, -10000.0),
       reaction("r2", {0, -1, 1}, {0, 1, 0}, k2, 50000.0, 350.0, -10000.0)});
  const Stream in{350.0, 2e5, {10.0, 0.0, 0.0}};
  SunContext ctx;
  const StageResult r =
      rxtrain::run_cstr(mech, tank(HeatMode::Isothermal, std::nullopt, 0.8), in, {0, 10.0}, ctx);
  const double tau = 0.8 / (k1 * 0.2);
  REQUIRE(r.volume.has_value());
  CHECK(rel(*r.volume, tau * 1e-3) < 1e-8);
  CHECK(rel(r.conversion, 0.8) < 1e-10);
  CHECK(rel(r.outlet.F[1] / 10.0, k1 * tau / ((1 + k1 * tau) * (1 + k2 * tau))) < 1e-8);
  // Heat added to hold T: the sum of extents times dH (isothermal energy
  // balance; both dH are -10 kJ/mol, extents are F_A0 - F_A and F_C).
  CHECK(rel(r.duty, -10000.0 * ((10.0 - r.outlet.F[0]) + r.outlet.F[2])) < 1e-8);

  const StageResult rated =
      rxtrain::run_cstr(mech, tank(HeatMode::Isothermal, *r.volume), in, {0, 10.0}, ctx);
  CHECK(std::abs(rated.conversion - 0.8) < 1e-8);
}

TEST_CASE("sizing an irreversible CSTR to complete conversion is infeasible", "[cstr]") {
  const Mechanism mech = s_curve_mechanism();
  // B is fed too, so X is measured against A and cannot pass 1 ... but a
  // target of 1 itself is unreachable in finite volume (rate zero there).
  const Stream in{kS_T0, 2e5, {10.0, 1.0}};
  SunContext ctx;
  try {
    rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, std::nullopt, 1.0), in, {0, 10.0}, ctx);
    FAIL("expected an InfeasibleError");
  } catch (const rxtrain::InfeasibleError& e) {
    CHECK(std::string(e.what()).find("out of reach") != std::string::npos);
  }
}

TEST_CASE("sizing onto the middle of the S-curve warns that start-up does not reach it", "[cstr]") {
  // Closed-form sizing as above: T = T0 + J X, tau = X / (k(T) (1 - X)).
  const Mechanism mech = s_curve_mechanism();
  const Stream in{kS_T0, 2e5, {10.0, 0.0}};
  SunContext ctx;
  const double X = 0.5, T = kS_T0 + kS_J * X;
  const double tau = X / (s_curve_k(T) * (1 - X));
  REQUIRE(gsl_steady_states(tau).size() == 3);  // inside the multiplicity region
  const StageResult r =
      rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, std::nullopt, X), in, {0, 10.0}, ctx);
  CHECK(rel(*r.volume, tau * kS_v0) < 1e-9);
  CHECK(rel(r.outlet.T, T) < 1e-10);
  CHECK(r.steady_states.size() == 3);
  REQUIRE(r.warnings.size() == 1);
  CHECK(r.warnings.front().find("start-up from the feed does not reach") != std::string::npos);
}

TEST_CASE("adiabatic sizing with two reactions round-trips through rating", "[cstr]") {
  // Invented series reactions A -> B -> C, both exothermic, mild enough
  // for a single steady state (the stage finds only one and warns of none).
  const double E1 = 20000.0, E2 = 30000.0;
  const Mechanism mech(
      Phase::Liquid,
      {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000), species("C", 150, 0.1, 1000)},
      {reaction("r1", {-1, 1, 0}, {1, 0, 0}, 0.2, E1, 350.0, -10000.0),
       reaction("r2", {0, -1, 1}, {0, 1, 0}, 0.1, E2, 350.0, -15000.0)});
  const Stream in{340.0, 2e5, {10.0, 0.0, 0.0}};
  SunContext ctx;
  const StageResult sized =
      rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, std::nullopt, 0.8), in, {0, 10.0}, ctx);
  CHECK(rel(sized.conversion, 0.8) < 1e-10);
  // Energy balance of an adiabatic CSTR, equal constant cp (dCp = 0):
  // sum F cp (T - T0) = -(extent_1 dH_1 + extent_2 dH_2).
  const auto& F = sized.outlet.F;
  CHECK(rel(1500.0 * (sized.outlet.T - 340.0), 10000.0 * (10.0 - F[0]) + 15000.0 * F[2]) < 1e-8);
  // Mole balances of an ideal CSTR, series first order, closed form at the
  // outlet T: k1 tau = X / (1 - X), F_B / F_A0 = k1 tau / ((1 + k1 tau)(1 + k2 tau)).
  const double T = sized.outlet.T;
  const double k1 = 0.2 * std::exp(-E1 / kGasConstant * (1 / T - 1 / 350.0));
  const double k2 = 0.1 * std::exp(-E2 / kGasConstant * (1 / T - 1 / 350.0));
  const double tau = *sized.volume / 1e-3;
  CHECK(rel(k1 * tau, 0.8 / 0.2) < 1e-8);
  CHECK(rel(F[1] / 10.0, k1 * tau / ((1 + k1 * tau) * (1 + k2 * tau))) < 1e-8);
  CHECK(sized.steady_states.size() == 1);
  CHECK(sized.warnings.empty());
  const StageResult rated =
      rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, *sized.volume), in, {0, 10.0}, ctx);
  CHECK(std::abs(rated.conversion - 0.8) < 1e-8);
  CHECK(rel(rated.outlet.T, sized.outlet.T) < 1e-9);
}

namespace {

// Everything a stirred-tank result reports, compared exactly.
void require_same_tank(const StageResult& a, const StageResult& b) {
  CHECK(a.outlet.T == b.outlet.T);
  CHECK(a.outlet.F == b.outlet.F);
  CHECK(a.volume == b.volume);
  CHECK(a.duty == b.duty);
  CHECK(a.conversion == b.conversion);
  CHECK(a.stats.newton_iters == b.stats.newton_iters);
  CHECK(a.stats.message == b.stats.message);
  CHECK(a.warnings == b.warnings);
  REQUIRE(a.steady_states.size() == b.steady_states.size());
  for (std::size_t k = 0; k < a.steady_states.size(); ++k) {
    CHECK(a.steady_states[k].T == b.steady_states[k].T);
    CHECK(a.steady_states[k].F == b.steady_states[k].F);
  }
}

}  // namespace

TEST_CASE("a reused CstrWorkspace gives the results of fresh runs", "[cstr][workspace]") {
  // Tanks of other sizes, heat modes and paths (three states, ignition,
  // closed-form sizing, sizing by continuation) in turn on one workspace:
  // nothing of one run may leak into the next.
  const Mechanism s_curve = s_curve_mechanism();
  const Stream s_in{kS_T0, 2e5, {10.0, 0.0}};
  const Mechanism series(
      Phase::Liquid,
      {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000), species("C", 150, 0.1, 1000)},
      {reaction("r1", {-1, 1, 0}, {1, 0, 0}, 0.2, 20000.0, 350.0, -10000.0),
       reaction("r2", {0, -1, 1}, {0, 1, 0}, 0.1, 30000.0, 350.0, -15000.0)});
  const Stream series_in{340.0, 2e5, {10.0, 0.0, 0.0}};
  struct Run {
    const Mechanism* mech;
    ReactorSpec spec;
    const Stream* in;
  };
  const std::vector<Run> runs{
      {&s_curve, tank(HeatMode::Adiabatic, 1.0 * kS_v0), &s_in},
      {&series, tank(HeatMode::Adiabatic, std::nullopt, 0.8), &series_in},
      {&s_curve, tank(HeatMode::Adiabatic, 10.0 * kS_v0), &s_in},
      {&s_curve, tank(HeatMode::Adiabatic, std::nullopt, 0.5), &s_in},
      {&series, tank(HeatMode::Isothermal, 2e-2), &series_in},
  };
  SunContext ctx;
  std::vector<StageResult> fresh;
  for (const auto& r : runs)
    fresh.push_back(rxtrain::run_cstr(*r.mech, r.spec, *r.in, {0, 10.0}, ctx));
  REQUIRE(fresh[0].steady_states.size() == 3);
  rxtrain::CstrWorkspace ws(ctx);
  for (int pass = 0; pass < 2; ++pass)
    for (std::size_t k = 0; k < runs.size(); ++k) {
      INFO("pass " << pass << ", run " << k);
      require_same_tank(rxtrain::run_cstr(*runs[k].mech, runs[k].spec, *runs[k].in, {0, 10.0}, ws),
                        fresh[k]);
    }
  // An infeasible target leaves the workspace fit for the next run.
  CHECK_THROWS_AS(rxtrain::run_cstr(s_curve, tank(HeatMode::Adiabatic, std::nullopt, 1.0),
                                    Stream{kS_T0, 2e5, {10.0, 1.0}}, {0, 10.0}, ws),
                  rxtrain::InfeasibleError);
  require_same_tank(rxtrain::run_cstr(s_curve, runs[0].spec, s_in, {0, 10.0}, ws), fresh[0]);
}

TEST_CASE("a reused TrainWorkspace gives the results of fresh runs with stirred tanks",
          "[cstr][workspace]") {
  const rxtrain::UnitParser units;
  const rxtrain::Case demo =
      rxtrain::load_case(RXTRAIN_SOURCE_DIR "/cases/liquid-tank-then-tube.yaml", units);
  const rxtrain::Case s_curve =
      rxtrain::load_case_from_string(rxtrain::test::kSCurveTank, "s.yaml", units);
  rxtrain::TrainOptions o;
  o.equilibrium_views = false;
  const rxtrain::TrainResult fresh_demo = rxtrain::run_train(demo, o);
  const rxtrain::TrainResult fresh_s = rxtrain::run_train(s_curve, o);
  REQUIRE(fresh_s.stages[0].steady_states.size() == 3);
  rxtrain::TrainWorkspace ws;
  for (int k = 0; k < 2; ++k) {
    const rxtrain::TrainResult a = rxtrain::run_train(demo, o, ws);
    const rxtrain::TrainResult b = rxtrain::run_train(s_curve, o, ws);
    REQUIRE(a.stages.size() == fresh_demo.stages.size());
    for (std::size_t s = 0; s < a.stages.size(); ++s) {
      CHECK(a.stages[s].outlet.T == fresh_demo.stages[s].outlet.T);
      CHECK(a.stages[s].outlet.F == fresh_demo.stages[s].outlet.F);
      CHECK(a.stages[s].volume == fresh_demo.stages[s].volume);
      CHECK(a.stages[s].stats.message == fresh_demo.stages[s].stats.message);
    }
    require_same_tank(a.stages[0], fresh_demo.stages[0]);
    require_same_tank(b.stages[0], fresh_s.stages[0]);
  }
}

TEST_CASE("a warm-started chain of tanks finds the steady states of cold runs", "[cstr]") {
  // tau from inside the multiplicity region past ignition; each tank gets
  // the previous one's steady states as first starts. Every state must be
  // one of GSL's roots (see gsl_steady_states) and the set and the
  // reported (feed-branch) state those of a cold run, within the Newton
  // tolerance.
  const Mechanism mech = s_curve_mechanism();
  const Stream in{kS_T0, 2e5, {10.0, 0.0}};
  SunContext ctx;
  rxtrain::CstrWorkspace ws(ctx);
  std::vector<rxtrain::SteadyState> previous;
  for (double tau : {0.2, 0.3, 0.5, 0.7, 1.0, 1.5, 2.0, 3.0, 5.0, 10.0, 5.0, 2.0, 1.0}) {
    INFO("tau = " << tau << " s");
    const ReactorSpec spec = tank(HeatMode::Adiabatic, tau * kS_v0);
    const StageResult cold = rxtrain::run_cstr(mech, spec, in, {0, 10.0}, ctx);
    rxtrain::CstrOptions warm_options;
    warm_options.guesses = previous;
    const StageResult warm = rxtrain::run_cstr(mech, spec, in, {0, 10.0}, ws, warm_options);
    const std::vector<double> ref = gsl_steady_states(tau);
    REQUIRE(cold.steady_states.size() == ref.size());
    REQUIRE(warm.steady_states.size() == ref.size());
    for (std::size_t k = 0; k < ref.size(); ++k) {
      CHECK(rel(warm.steady_states[k].T, ref[k]) < 1e-7);
      // Newton stops at a scaled residual of 1e-11 (NewtonOptions).
      CHECK(std::abs(warm.steady_states[k].T - cold.steady_states[k].T) < 1e-6);
      CHECK(std::abs(warm.steady_states[k].X - cold.steady_states[k].X) < 1e-9);
    }
    CHECK(std::abs(warm.outlet.T - cold.outlet.T) < 1e-6);
    previous = warm.steady_states;
  }
  // A guess must have one flow per species.
  rxtrain::SteadyState one_flow;
  one_flow.T = 400.0;
  one_flow.X = 0.5;
  one_flow.F = {5.0};
  const std::vector<rxtrain::SteadyState> bad{one_flow};
  rxtrain::CstrOptions bad_options;
  bad_options.guesses = bad;
  CHECK_THROWS_AS(
      rxtrain::run_cstr(mech, tank(HeatMode::Adiabatic, kS_v0), in, {0, 10.0}, ws, bad_options),
      std::invalid_argument);
}
