// Tubular stage and the CVODE wrapper, checked against analytic solutions,
// the steady-flow energy balance and an independent integrator (GSL odeiv2).
// All kinetic and physical data here are invented for the tests.
#include "rxtrain/stages/pfr.hpp"

#include <gsl/gsl_errno.h>
#include <gsl/gsl_odeiv2.h>
#include <gsl/gsl_roots.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <memory>
#include <stdexcept>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/stages/pfr_batch.hpp"
#include "test_species.hpp"

using namespace rxtrain;
using rxtrain::test::gsl_brent;
using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;

namespace {

Species species(const std::string& id, double cp, double mw = 0.1, double density = 1000) {
  return test::make_species(id, cp, 0.0, 100.0, mw, density);
}

// First-order irreversible reaction in species `reactant`.
Reaction first_order(const std::string& id, std::vector<double> nu, int reactant, double A,
                     double Ea, double dH, std::optional<double> T_ref = std::nullopt) {
  Reaction r;
  r.id = id;
  r.equation = id;
  r.rate.orders.assign(nu.size(), 0.0);
  r.rate.orders[reactant] = 1.0;
  r.nu = std::move(nu);
  r.rate.A = A;
  r.rate.Ea = Ea;
  r.rate.T_ref = T_ref;
  r.dH_298 = dH;
  return r;
}

ReactorSpec volume_spec(double V, HeatMode heat) {
  ReactorSpec s;
  s.id = "R1";
  s.heat = heat;
  s.volume = V;
  s.where = {"case.yaml", 12, 5};
  return s;
}

ReactorSpec target_spec(double X, HeatMode heat) {
  ReactorSpec s;
  s.id = "R1";
  s.heat = heat;
  s.target_conversion = X;
  s.where = {"case.yaml", 12, 5};
  return s;
}

PfrOptions tight() {
  PfrOptions o;
  o.cvode.rtol = 1e-10;
  o.cvode.atol = 1e-14;
  return o;
}

// ---- GSL odeiv2 (independent reference integrator) ------------------------

// ---- shared test systems -------------------------------------------------

// Adiabatic gas A -> B with inert I, constant cp, cp_A = cp_B (so dCp = 0).
struct AdiabaticGas {
  Mechanism mech;
  Stream inlet;
  ConversionBasis basis;
  double dH = -50e3;        // J/mol
  double sum_theta_cp = 0;  // sum_i (F_i0 / F_A0) cp_i, J/(mol K)
};

AdiabaticGas adiabatic_gas() {
  AdiabaticGas g;
  // k = 0.8 1/s at 500 K, Ea = 60 kJ/mol (invented).
  Reaction r = first_order("R", {-1, 1, 0}, 0, 0.8, 60e3, -50e3, 500.0);
  g.mech = Mechanism(Phase::Gas, {species("A", 40), species("B", 40), species("I", 29)}, {r});
  g.inlet = Stream{500.0, 2e5, {1.0, 0.0, 4.0}};
  g.basis = ConversionBasis{0, 1.0};
  g.sum_theta_cp = 40 + 4 * 29;
  return g;
}

}  // namespace

TEST_CASE("isothermal first-order liquid PFR follows X = 1 - exp(-k tau)", "[pfr]") {
  // Liquid A -> B with equal molar volumes: v is constant, C_A = F_A / v, and
  // dF_A/dV = -k F_A / v integrates to F_A = F_A0 exp(-k V / v0).
  const double T = 340;
  Reaction r = first_order("R", {-1, 1, 0}, 0, 2.0e-3, 55e3, -30e3, 340.0);
  const Mechanism mech(
      Phase::Liquid,
      {species("A", 150, 0.1, 900), species("B", 160, 0.1, 900), species("S", 75, 0.018, 1000)},
      {r});
  const Stream inlet{T, 3e5, {2.0, 0.0, 30.0}};
  const ConversionBasis basis{0, 2.0};
  const double v0 = 2.0 * 0.1 / 900 + 30 * 0.018 / 1000;
  const double k = 2.0e-3;
  const double V = 2.5 * v0 / k;  // k tau = 2.5
  SunContext ctx;
  const StageResult res =
      run_pfr(mech, volume_spec(V, HeatMode::Isothermal), inlet, basis, ctx, tight());
  CHECK(*res.volume == Approx(V).epsilon(1e-14));
  CHECK(res.conversion == Approx(1 - std::exp(-2.5)).epsilon(1e-8));
  CHECK(*res.space_time == Approx(V / v0).epsilon(1e-13));
  REQUIRE(res.profile.size() > 5);
  for (const auto& p : res.profile) {
    const double F_exact = 2.0 * std::exp(-k * p.V / v0);
    INFO("V = " << p.V);
    CHECK(p.F[0] == Approx(F_exact).epsilon(1e-8));
    CHECK(p.X == Approx(1 - F_exact / 2.0).margin(1e-8));
    CHECK(p.T == T);
  }
  // Isothermal duty (steady-flow first law at constant T): heat added =
  // dH(T) * moles converted, dH(T) = dH_298 + dCp (T - 298.15) (Kirchhoff,
  // dCp = 160 - 150 J/(mol K)).
  const double dH_T = -30e3 + 10.0 * (T - kReferenceT);
  CHECK(res.duty == Approx(dH_T * 2.0 * res.conversion).epsilon(1e-8));
}

TEST_CASE("isothermal first-order gas PFR with constant moles follows X = 1 - exp(-k tau)",
          "[pfr]") {
  const double T = 600, P = 5e5;
  Reaction r = first_order("R", {-1, 1, 0}, 0, 0.05, 80e3, 10e3, 600.0);
  const Mechanism mech(Phase::Gas, {species("A", 40), species("B", 40), species("N2", 29)}, {r});
  const Stream inlet{T, P, {0.4, 0.1, 1.5}};
  const ConversionBasis basis{0, 0.4};
  const double v0 = 2.0 * kGasConstant * T / P;
  const double V = 1.7 * v0 / 0.05;  // k tau = 1.7
  SunContext ctx;
  const StageResult res =
      run_pfr(mech, volume_spec(V, HeatMode::Isothermal), inlet, basis, ctx, tight());
  CHECK(res.conversion == Approx(1 - std::exp(-1.7)).epsilon(1e-8));
  for (const auto& p : res.profile) {
    INFO("V = " << p.V);
    CHECK(p.F[0] == Approx(0.4 * std::exp(-0.05 * p.V / v0)).epsilon(1e-8));
  }
}

TEST_CASE("adiabatic PFR profile obeys the adiabatic energy balance", "[pfr]") {
  // Steady-flow first law with constant cp and one reaction:
  // (T - T0) (sum Theta_i cp_i + X dCp) = (-dH(T0)) X; with dCp = 0 this is
  // T - T0 = (-dH) X / sum Theta_i cp_i (standard adiabatic relation).
  const AdiabaticGas g = adiabatic_gas();
  SunContext ctx;
  const double v0 = g.mech.volumetric_flow(g.inlet.T, g.inlet.P, g.inlet.F.data());
  const StageResult res =
      run_pfr(g.mech, volume_spec(3.0 * v0, HeatMode::Adiabatic), g.inlet, g.basis, ctx);
  REQUIRE(res.conversion > 0.5);
  REQUIRE(res.profile.size() > 5);
  for (const auto& p : res.profile) {
    const double dT_pred = -g.dH * p.X / g.sum_theta_cp;
    INFO("V = " << p.V << " X = " << p.X << " T - T0 = " << p.T - g.inlet.T << " predicted "
                << dT_pred);
    CHECK(std::abs((p.T - g.inlet.T) - dT_pred) <= 1e-8 * std::max(dT_pred, 1e-3));
  }
  // Monotonic exothermic bed: the hottest point is the outlet (to the
  // integration tolerance; round-off lets T wander by ~1e-11 once the
  // reactant is gone).
  CHECK(res.T_max == Approx(res.outlet.T).epsilon(1e-9));
  CHECK(res.duty == 0.0);
}

TEST_CASE("adiabatic PFR with a heat-capacity change obeys the energy balance", "[pfr]") {
  // Same relation with dCp = cp_B + cp_C - cp_A != 0 (A -> B + C, mole change).
  Reaction r = first_order("R", {-1, 1, 1, 0}, 0, 0.3, 70e3, -45e3, 550.0);
  const Mechanism mech(
      Phase::Gas, {species("A", 90), species("B", 50), species("C", 32), species("I", 29)}, {r});
  const Stream inlet{550, 3e5, {1.0, 0.0, 0.0, 2.0}};
  const ConversionBasis basis{0, 1.0};
  const double dCp = 50 + 32 - 90;
  const double sum_theta_cp = 90 + 2 * 29;
  const double dH0 = -45e3 + dCp * (550 - kReferenceT);  // Kirchhoff
  SunContext ctx;
  // With dCp != 0 the balance is no longer a linear invariant of the ODE,
  // so BDF keeps it only to its tolerance (measured 2.3e-7 K, 1e-8 relative
  // at the default rtol 1e-8): tighten to hold 1e-8 relative.
  const StageResult res =
      run_pfr(mech, volume_spec(2.0, HeatMode::Adiabatic), inlet, basis, ctx, tight());
  REQUIRE(res.conversion > 0.3);
  for (const auto& p : res.profile) {
    const double dT_pred = -dH0 * p.X / (sum_theta_cp + p.X * dCp);
    INFO("V = " << p.V << " X = " << p.X);
    CHECK(std::abs((p.T - inlet.T) - dT_pred) <= 1e-8 * std::max(dT_pred, 1e-3));
  }
}

TEST_CASE("adiabatic liquid PFR agrees with GSL rk8pd", "[pfr]") {
  GslNoAbort no_abort;
  // Liquid A -> B (exothermic, Arrhenius, first order) in solvent S; cp_B !=
  // cp_A so dH varies with T (Kirchhoff) and sum F cp varies along the bed.
  const double Ea = 75e3, dH298 = -70e3;
  const double A = 5e-4 * std::exp(Ea / (kGasConstant * 320));  // k(320 K) = 5e-4 1/s
  const std::vector<double> cp{150, 170, 75};
  Reaction r = first_order("R", {-1, 1, 0}, 0, A, Ea, dH298);
  const Mechanism mech(Phase::Liquid,
                       {species("A", cp[0], 0.1, 900), species("B", cp[1], 0.1, 900),
                        species("S", cp[2], 0.018, 1000)},
                       {r});
  const Stream inlet{320, 2e5, {4.0, 0.0, 40.0}};
  const ConversionBasis basis{0, 4.0};
  const double v = 4.0 * 0.1 / 900 + 40 * 0.018 / 1000;  // constant: equal molar volumes
  const double V_end = 3.0;

  // The same model written out independently for GSL: y = [F_A, T].
  GslOde ode(2, [&](double, const double* y, double* dy) {
    const double FA = y[0], T = y[1];
    const double FB = 4.0 - FA;
    const double rate = A * std::exp(-Ea / (kGasConstant * T)) * FA / v;
    const double dH = dH298 + (cp[1] - cp[0]) * (T - kReferenceT);
    dy[0] = -rate;
    dy[1] = -dH * rate / (FA * cp[0] + FB * cp[1] + 40.0 * cp[2]);
  });

  // This bed ignites: errors made before the runaway grow through it. At
  // the default rtol 1e-8 the measured difference from GSL near ignition is
  // 1.1e-6 relative in X and 1e-7 in T, falling in proportion to rtol
  // (2.7e-8 and 2.3e-9 at rtol 1e-10), so the check runs at rtol 1e-10.
  SunContext ctx;
  const StageResult res =
      run_pfr(mech, volume_spec(V_end, HeatMode::Adiabatic), inlet, basis, ctx, tight());
  REQUIRE(res.conversion > 0.5);
  // Compare at every CVODE profile point (GSL is driven to each point's V, so
  // no interpolation error enters) and at the outlet.
  std::vector<double> y{4.0, 320.0};
  double V_prev = 0;
  int compared = 0;
  double worst_T = 0, worst_X = 0;
  for (const auto& p : res.profile) {
    if (p.V > V_prev) ode.advance(V_prev, p.V, y);
    V_prev = p.V;
    const double X_ref = 1 - y[0] / 4.0;
    worst_T = std::max(worst_T, std::abs(p.T - y[1]) / y[1]);
    if (X_ref > 1e-3) worst_X = std::max(worst_X, std::abs(p.X - X_ref) / X_ref);
    CHECK(p.T == Approx(y[1]).epsilon(1e-7));
    CHECK(p.X == Approx(X_ref).epsilon(1e-7).margin(1e-9));
    ++compared;
  }
  INFO("worst relative T " << worst_T << ", X " << worst_X);
  CHECK(compared > 10);
  CHECK(res.outlet.T == Approx(y[1]).epsilon(1e-7));
  CHECK(res.conversion == Approx(1 - y[0] / 4.0).epsilon(1e-7));
  // Intermediate volumes that are not solver steps, through the profile's
  // neighbouring points: GSL from the inlet to V_mid vs CVODE re-run there.
  for (double f : {0.13, 0.5, 0.77}) {
    std::vector<double> ym{4.0, 320.0};
    ode.advance(0.0, f * V_end, ym);
    const StageResult part =
        run_pfr(mech, volume_spec(f * V_end, HeatMode::Adiabatic), inlet, basis, ctx, tight());
    INFO("V = " << f * V_end);
    CHECK(part.outlet.T == Approx(ym[1]).epsilon(1e-7));
    CHECK(part.conversion == Approx(1 - ym[0] / 4.0).epsilon(1e-7));
  }
}

TEST_CASE("T_max inside an exothermic-then-endothermic bed matches GSL", "[pfr]") {
  GslNoAbort no_abort;
  // Liquid A -> B (exothermic, fast), B -> C (endothermic, slower, higher Ea)
  // in solvent S: T rises, peaks, then falls.
  const double k1 = 2e-3, Ea1 = 60e3, dH1 = -60e3;
  const double k2 = 2e-4, Ea2 = 100e3, dH2 = 45e3;
  const double Tr = 350;
  Reaction r1 = first_order("R1", {-1, 1, 0, 0}, 0, k1, Ea1, dH1, Tr);
  Reaction r2 = first_order("R2", {0, -1, 1, 0}, 1, k2, Ea2, dH2, Tr);
  const Mechanism mech(Phase::Liquid,
                       {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000),
                        species("C", 150, 0.1, 1000), species("S", 75, 0.018, 1000)},
                       {r1, r2});
  const double FA0 = 5, FS = 50;
  const Stream inlet{Tr, 2e5, {FA0, 0.0, 0.0, FS}};
  const ConversionBasis basis{0, FA0};
  const double v = FA0 * 1e-4 + FS * 1.8e-5;
  const double V_end = 20;
  const double C_total = FA0 * 150 + FS * 75;  // cp equal for A, B, C: constant

  // y = [F_A, F_B, T]; F_C = FA0 - F_A - F_B.
  auto rhs = [&](const double* y, double* dy) {
    const double T = y[2];
    const double r1v = k1 * std::exp(-Ea1 / kGasConstant * (1 / T - 1 / Tr)) * y[0] / v;
    const double r2v = k2 * std::exp(-Ea2 / kGasConstant * (1 / T - 1 / Tr)) * y[1] / v;
    dy[0] = -r1v;
    dy[1] = r1v - r2v;
    dy[2] = -(dH1 * r1v + dH2 * r2v) / C_total;
  };
  GslOde ode(3, [&](double, const double* y, double* dy) { rhs(y, dy); });

  SunContext ctx;
  const StageResult res = run_pfr(mech, volume_spec(V_end, HeatMode::Adiabatic), inlet, basis, ctx);
  REQUIRE(res.T_max > inlet.T + 1);
  REQUIRE(res.T_max > res.outlet.T + 1);

  // GSL: march on a grid until dT/dV changes sign, then Brent on dT/dV(V),
  // each evaluation integrating from the left end of the bracket.
  const int N = 400;
  std::vector<double> y{FA0, 0, Tr}, y_left, dy(3);
  double V_left = 0;
  bool bracketed = false;
  for (int i = 1; i <= N && !bracketed; ++i) {
    const double V = V_end * i / N;
    y_left = y;
    V_left = V_end * (i - 1) / N;
    ode.advance(V_left, V, y);
    rhs(y.data(), dy.data());
    bracketed = dy[2] < 0;
  }
  REQUIRE(bracketed);
  auto state_at = [&](double V) {
    std::vector<double> ys = y_left;
    if (V > V_left) ode.advance(V_left, V, ys);
    return ys;
  };
  const double V_peak = gsl_brent(
      [&](double V) {
        std::vector<double> ys = state_at(V), d(3);
        rhs(ys.data(), d.data());
        return d[2];
      },
      V_left, V_left + V_end / N, 1e-12);
  const double T_peak = state_at(V_peak)[2];
  INFO("GSL peak " << T_peak << " K at V = " << V_peak << "; run_pfr T_max " << res.T_max);
  CHECK(res.T_max == Approx(T_peak).epsilon(1e-6));
  // The peak is a profile point (the stage stops on dT/dV = 0).
  bool peak_in_profile = false;
  for (const auto& p : res.profile)
    if (p.T == res.T_max) peak_in_profile = std::abs(p.V - V_peak) < 1e-3 * V_end;
  CHECK(peak_in_profile);
  CHECK(res.T_min == inlet.T);

  // The same bed in a batch with two other inlet temperatures (a sweep's
  // batched path): each run finds its own peak between steps.
  const ReactorSpec spec = volume_spec(V_end, HeatMode::Adiabatic);
  std::vector<PfrBatchItem> items;
  for (double T_in : {Tr - 5, Tr, Tr + 5}) {
    Stream in = inlet;
    in.T = T_in;
    items.push_back({&mech, &spec, in, basis});
  }
  PfrOptions outlet_only;
  outlet_only.full_profile = false;
  REQUIRE(pfr_batchable(mech, spec, outlet_only));
  PfrBatchWorkspace bws(ctx);
  const auto batch = run_pfr_batch(items, bws, outlet_only);
  CHECK(batch[1].T_max == Approx(T_peak).epsilon(1e-6));
  CHECK(batch[1].T_min == inlet.T);
  CHECK(batch[1].outlet.T == Approx(res.outlet.T).epsilon(1e-7));
  for (int b : {0, 2}) {
    Stream in = inlet;
    in.T = items[b].inlet.T;
    const StageResult lone = run_pfr(mech, spec, in, basis, ctx, outlet_only);
    INFO("inlet " << in.T << " K");
    CHECK(batch[b].T_max == Approx(lone.T_max).epsilon(1e-7));
    CHECK(batch[b].T_max > batch[b].outlet.T + 1);
    CHECK(batch[b].outlet.T == Approx(lone.outlet.T).epsilon(1e-7));
  }
}

TEST_CASE("sizing to a target conversion round-trips", "[pfr]") {
  const AdiabaticGas g = adiabatic_gas();
  SunContext ctx;
  const StageResult sized =
      run_pfr(g.mech, target_spec(0.65, HeatMode::Adiabatic), g.inlet, g.basis, ctx, tight());
  REQUIRE(sized.sized);
  REQUIRE(sized.volume);
  CHECK(sized.conversion == Approx(0.65).epsilon(1e-8));
  // The rated run is the reference here, so it runs tighter still: this
  // bed lights off (k grows ~50-fold from inlet to outlet), which
  // amplifies the volume integration's error to ~70 rtol in V, while a
  // one-reaction bed is sized by quadrature along its exact adiabatic line.
  PfrOptions reference = tight();
  reference.cvode.rtol = 1e-12;
  reference.cvode.atol = 1e-16;
  const StageResult rated = run_pfr(g.mech, volume_spec(*sized.volume, HeatMode::Adiabatic),
                                    g.inlet, g.basis, ctx, reference);
  CHECK_FALSE(rated.sized);
  CHECK(rated.conversion == Approx(0.65).epsilon(1e-8));
  CHECK(rated.outlet.T == Approx(sized.outlet.T).epsilon(1e-9));
}

TEST_CASE("isothermal sizing matches the analytic first-order volume", "[pfr]") {
  // Liquid first order at constant v: V = (v0 / k) ln(1 / (1 - X)) (analytic).
  Reaction r = first_order("R", {-1, 1, 0}, 0, 2.0e-3, 55e3, -30e3, 340.0);
  const Mechanism mech(
      Phase::Liquid,
      {species("A", 150, 0.1, 900), species("B", 160, 0.1, 900), species("S", 75, 0.018, 1000)},
      {r});
  const Stream inlet{340, 3e5, {2.0, 0.0, 30.0}};
  const ConversionBasis basis{0, 2.0};
  const double v0 = 2.0 * 0.1 / 900 + 30 * 0.018 / 1000;
  SunContext ctx;
  const StageResult res =
      run_pfr(mech, target_spec(0.65, HeatMode::Isothermal), inlet, basis, ctx, tight());
  REQUIRE(res.sized);
  CHECK(*res.volume == Approx(v0 / 2.0e-3 * std::log(1 / 0.35)).epsilon(1e-8));
  CHECK(res.conversion == Approx(0.65).epsilon(1e-8));
  CHECK(res.T_max == 340);
}

TEST_CASE("a target beyond adiabatic equilibrium is infeasible, naming the limit", "[pfr]") {
  GslNoAbort no_abort;
  // Gas A <=> B (exothermic, no mole change) with inert; K from van 't Hoff.
  const double dH = -40e3, K_ref = 20, T_ref = 500, T0 = 500;
  Reaction r = first_order("R", {-1, 1, 0}, 0, 2.0, 50e3, dH, 500.0);
  r.reversible = true;
  r.equilibrium.kind = EquilibriumSource::Kind::VantHoff;
  r.equilibrium.K_ref = K_ref;
  r.equilibrium.T_ref = T_ref;
  r.equilibrium.dH = dH;
  const Mechanism mech(Phase::Gas, {species("A", 35), species("B", 35), species("I", 35)}, {r});
  const Stream inlet{T0, 2e5, {1.0, 0.0, 3.0}};
  const ConversionBasis basis{0, 1.0};
  // Adiabatic equilibrium, independently: X/(1-X) = K(T0 + (-dH) X / 140)
  // (energy balance with constant cp, Q = F_B/F_A), solved by GSL Brent.
  const double X_eq = gsl_brent(
      [&](double X) {
        const double T = T0 - dH * X / 140.0;
        return std::log(X / (1 - X)) - (std::log(K_ref) - dH / kGasConstant * (1 / T - 1 / T_ref));
      },
      1e-9, 1 - 1e-9, 1e-13);
  REQUIRE(X_eq > 0.3);
  REQUIRE(X_eq < 0.8);
  SunContext ctx;
  bool thrown = false;
  try {
    run_pfr(mech, target_spec(0.9, HeatMode::Adiabatic), inlet, basis, ctx);
  } catch (const InfeasibleError& e) {
    thrown = true;
    const std::string what = e.what();
    INFO(what);
    CHECK(what.rfind("case.yaml:12:5: error: ", 0) == 0);
    CHECK(what.find("0.9000") != std::string::npos);
    CHECK(what.find("the most this stage can reach") != std::string::npos);
    const std::string key = "can reach is X = ";
    const auto at = what.find(key);
    REQUIRE(at != std::string::npos);
    CHECK(std::stod(what.substr(at + key.size())) == Approx(X_eq).margin(1e-4));
    CHECK(what.find("nan") == std::string::npos);
  }
  CHECK(thrown);
  // adiabatic_limit: the bed of unlimited size ends at the same point.
  const Stream lim = adiabatic_limit(mech, {1.0}, inlet, HeatMode::Adiabatic, ctx);
  CHECK(basis.conversion(lim) == Approx(X_eq).epsilon(1e-6));
  CHECK(lim.T == Approx(T0 - dH * X_eq / 140.0).epsilon(1e-8));
  // A reachable target below the limit is met.
  const StageResult ok =
      run_pfr(mech, target_spec(0.5 * X_eq, HeatMode::Adiabatic), inlet, basis, ctx);
  CHECK(ok.conversion == Approx(0.5 * X_eq).epsilon(1e-7));
}

TEST_CASE("per-catalyst rates need a bulk density and scale with it", "[pfr]") {
  AdiabaticGas g = adiabatic_gas();
  Reaction per_cat = g.mech.reactions()[0];
  per_cat.rate.basis = RateBasis::Catalyst;
  per_cat.rate.A = 0.8 / 750;  // per kg catalyst; 750 kg/m3 bed gives 0.8 per m3
  const Mechanism cat(Phase::Gas, g.mech.species(), {per_cat});
  SunContext ctx;
  ReactorSpec spec = volume_spec(0.05, HeatMode::Adiabatic);
  try {
    run_pfr(cat, spec, g.inlet, g.basis, ctx);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    const std::string what = e.what();
    INFO(what);
    CHECK(what.rfind("case.yaml:12:5: error: ", 0) == 0);
    CHECK(what.find("bulk_density") != std::string::npos);
  }
  spec.bulk_density = 750;
  const StageResult a = run_pfr(cat, spec, g.inlet, g.basis, ctx, tight());
  const StageResult b =
      run_pfr(g.mech, volume_spec(0.05, HeatMode::Adiabatic), g.inlet, g.basis, ctx, tight());
  CHECK(a.conversion == Approx(b.conversion).epsilon(1e-8));
  CHECK(*a.catalyst_mass == Approx(0.05 * 750).epsilon(1e-14));
}

// ---- CVODE wrapper ----------------------------------------------------------

namespace {
struct RhsBoom : std::runtime_error {
  using std::runtime_error::runtime_error;
};

// y' = -k y, exact y = y0 exp(-k t).
CvodeIntegrator decay(const SunContext& ctx, double k, CvodeOptions opt = {}) {
  return CvodeIntegrator(
      ctx, 1,
      [k](double, const double* y, double* yd) {
        yd[0] = -k * y[0];
        return 0;
      },
      [k](double, const double*, const double*, double* J) {
        J[0] = -k;
        return 0;
      },
      opt, {1.0});
}
}  // namespace

TEST_CASE("CVODE wrapper integrates y' = -k y to its tolerance", "[pfr]") {
  SunContext ctx;
  CvodeOptions opt;
  opt.rtol = 1e-10;
  opt.atol = 1e-14;
  CvodeIntegrator ode = decay(ctx, 3.0, opt);
  ode.init(0.0, {2.0});
  ode.set_stop_time(1.5);
  double t = 0;
  std::vector<double> y;
  CvodeIntegrator::Event ev;
  do {
    ev = ode.step(1.5, t, y);
    CHECK(y[0] == Approx(2.0 * std::exp(-3.0 * t)).epsilon(1e-8));
  } while (ev != CvodeIntegrator::Event::Stop);
  CHECK(t == 1.5);
  CHECK(ode.interpolate(1.5)[0] == Approx(y[0]).epsilon(1e-14));
  CHECK(ode.stats().steps > 10);
}

TEST_CASE("CVODE wrapper moves cleanly", "[pfr]") {
  SunContext ctx;
  CvodeIntegrator a = decay(ctx, 1.0);
  a.init(0.0, {1.0});
  a.set_stop_time(1.0);
  double t = 0;
  std::vector<double> y;
  a.step(1.0, t, y);
  // Move construction: the callbacks must follow the object.
  CvodeIntegrator b(std::move(a));
  while (b.step(1.0, t, y) != CvodeIntegrator::Event::Stop) {
  }
  CHECK(y[0] == Approx(std::exp(-1.0)).epsilon(1e-6));
  // Move assignment over a live integrator frees the old one.
  CvodeIntegrator c = decay(ctx, 2.0);
  c.init(0.0, {1.0});
  c = std::move(b);
  c.init(0.0, {1.0});
  c.set_stop_time(0.5);
  while (c.step(0.5, t, y) != CvodeIntegrator::Event::Stop) {
  }
  CHECK(y[0] == Approx(std::exp(-0.5)).epsilon(1e-6));
  {
    CvodeIntegrator d(std::move(c));
  }  // moved-from a, b, c destruct at scope end without touching freed memory
  SunContext moved(std::move(ctx));
  CHECK(moved.get() != nullptr);
  CHECK(ctx.get() == nullptr);
}

TEST_CASE("an exception inside the RHS surfaces from step()", "[pfr]") {
  // cvode.hpp: exceptions thrown inside are caught at the C boundary and
  // rethrown from step() (the same exception, not a translation).
  SunContext ctx;
  CvodeIntegrator ode(ctx, 1,
                      [](double t, const double* y, double* yd) {
                        if (t > 0.25) throw RhsBoom("boom at t > 0.25");
                        yd[0] = -y[0];
                        return 0;
                      },
                      nullptr, CvodeOptions{}, {1.0});
  ode.init(0.0, {1.0});
  double t = 0;
  std::vector<double> y;
  bool thrown = false;
  try {
    for (int i = 0; i < 100000; ++i) ode.step(10.0, t, y);
  } catch (const RhsBoom& e) {
    thrown = true;
    CHECK(std::string(e.what()) == "boom at t > 0.25");
  }
  CHECK(thrown);
  CHECK(t <= 0.25 + 1e-12);

  // A plain failure code (no exception) is a SolverError.
  CvodeIntegrator bad(ctx, 1,
                      [](double t2, const double* y2, double* yd) {
                        yd[0] = -y2[0];
                        return t2 > 0.1 ? -1 : 0;
                      },
                      nullptr, CvodeOptions{}, {1.0});
  bad.init(0.0, {1.0});
  CHECK_THROWS_AS(
      [&] {
        for (int i = 0; i < 100000; ++i) bad.step(10.0, t, y);
      }(),
      SolverError);
}

TEST_CASE("CVODE wrapper enforces max_steps", "[pfr]") {
  SunContext ctx;
  CvodeOptions opt;
  opt.max_steps = 20;
  CvodeIntegrator ode = decay(ctx, 1.0, opt);
  ode.init(0.0, {1.0});
  ode.set_stop_time(1e6);
  double t = 0;
  std::vector<double> y;
  try {
    for (int i = 0; i < 1000; ++i)
      if (ode.step(1e6, t, y) == CvodeIntegrator::Event::Stop) break;
    FAIL("expected a SolverError after 20 steps");
  } catch (const SolverError& e) {
    INFO(e.what());
    CHECK(std::string(e.what()).find("max_steps") != std::string::npos);
  }
}

TEST_CASE("CvodeOptions::validate names the bad field", "[pfr]") {
  CHECK(CvodeOptions{}.validate().empty());
  CvodeOptions o;
  o.rtol = 0;
  CHECK(o.validate().find("rtol") != std::string::npos);
  o = {};
  o.rtol = std::nan("");
  CHECK(o.validate().find("rtol") != std::string::npos);
  o = {};
  o.atol = -1;
  CHECK(o.validate().find("atol") != std::string::npos);
  o = {};
  o.max_steps = 0;
  CHECK(o.validate().find("max_steps") != std::string::npos);
  o = {};
  o.max_order = 6;
  CHECK(o.validate().find("max_order") != std::string::npos);
  o = {};
  o.max_order = 0;
  CHECK(o.validate().find("max_order") != std::string::npos);
  // The integrator refuses bad options with that message.
  SunContext ctx;
  o = {};
  o.atol = 0;
  try {
    decay(ctx, 1.0, o);
    FAIL("expected bad options to be refused");
  } catch (const std::exception& e) {
    CHECK(std::string(e.what()).find("atol") != std::string::npos);
  }
}

TEST_CASE("a stop temperature ends an adiabatic bed where T reaches it", "[pfr]") {
  // Constant cp, one reaction, dCp = 0: T - T0 = (-dH) X / sum Theta_i cp_i
  // (standard adiabatic relation), so T reaches T_stop at
  // X_stop = (T_stop - T0) sum Theta_i cp_i / (-dH).
  const AdiabaticGas g = adiabatic_gas();
  SunContext ctx;
  const double v0 = g.mech.volumetric_flow(g.inlet.T, g.inlet.P, g.inlet.F.data());
  const double T_stop = 600.0;
  const double X_stop = (T_stop - g.inlet.T) * g.sum_theta_cp / -g.dH;
  PfrOptions o = tight();
  o.stop_temperature = T_stop;

  // A fixed bed long enough to pass T_stop (it reaches X > 0.5 without it).
  const StageResult cut =
      run_pfr(g.mech, volume_spec(3.0 * v0, HeatMode::Adiabatic), g.inlet, g.basis, ctx, o);
  CHECK(cut.outlet.T == Approx(T_stop).epsilon(1e-9));
  CHECK(cut.conversion == Approx(X_stop).epsilon(1e-7));
  CHECK(*cut.volume < 3.0 * v0);
  CHECK(cut.T_max <= T_stop * (1 + 1e-9));
  CHECK_THAT(cut.stats.message, Catch::Contains("stop temperature"));
  // The same point found by sizing to X_stop without a stop temperature.
  const StageResult sized =
      run_pfr(g.mech, target_spec(X_stop, HeatMode::Adiabatic), g.inlet, g.basis, ctx, tight());
  CHECK(*cut.volume == Approx(*sized.volume).epsilon(1e-6));

  // Sizing past the stop temperature ends there without error.
  const StageResult short_of_target =
      run_pfr(g.mech, target_spec(0.6, HeatMode::Adiabatic), g.inlet, g.basis, ctx, o);
  CHECK(short_of_target.conversion == Approx(X_stop).epsilon(1e-7));

  // An inlet already at, or past, the stop temperature on the side T moves
  // to (T rising): the bed ends at V = 0.
  for (const double T_past : {g.inlet.T, 450.0}) {
    PfrOptions at_inlet = tight();
    at_inlet.stop_temperature = T_past;
    const StageResult none = run_pfr(g.mech, volume_spec(3.0 * v0, HeatMode::Adiabatic), g.inlet,
                                     g.basis, ctx, at_inlet);
    CHECK(*none.volume == 0.0);
    CHECK(none.conversion == 0.0);
  }

  // A stop temperature the bed never reaches leaves it whole.
  PfrOptions above = tight();
  above.stop_temperature = 2000.0;
  const StageResult full =
      run_pfr(g.mech, volume_spec(3.0 * v0, HeatMode::Adiabatic), g.inlet, g.basis, ctx, above);
  CHECK(*full.volume == Approx(3.0 * v0).epsilon(1e-12));
  CHECK(full.conversion > 0.5);
}
