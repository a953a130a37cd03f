// Numerically hard but valid cases, each built as case text and run through
// the whole path (loader, train, stages), then checked against an analytic
// solution or an independent integration with GSL (gsl_odeiv2, 8th-order
// Runge-Kutta-Prince-Dormand, or gsl_root for the stirred tank). All
// kinetics and thermo data here are invented for the test.
//
// Model shared by the checks (ideal-gas PFR/CSTR, one species list, mole
// number constant, equal cp so dH is constant):
//   C_i = F_i P / (F_t R T),  r = k(T) C_A,  k = k_ref exp(-Ea/R (1/T - 1/T_ref))
//   PFR:  dF_A/dV = -r,  dT/dV = -dH r / (F_t cp)
// (the plug-flow and stirred-tank design equations and the adiabatic
// energy balance, as in any reaction-engineering text; R: CODATA 2018, exact).
#include <fmt/format.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_odeiv2.h>
#include <gsl/gsl_roots.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "rxtrain/analysis/result_guard.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"

using namespace rxtrain;

namespace {

constexpr double kR = 8.31446261815324;  // J/(mol K), CODATA 2018 (exact)

// One gas-phase A => B case (plus optional extra text), constant cp.
struct Spec {
  double T0 = 500;     // K
  double P = 1e5;      // Pa
  double Ft = 1;       // mol/s, pure A unless `composition` is set
  double k_ref = 0.1;  // 1/s at T_ref
  double Ea = 0;       // J/mol
  double T_ref = 500;  // K
  double dH = 0;       // J/mol
  double cp = 100;     // J/(mol K), both species
  double V = 1;        // m3
  std::string type = "pfr";
  std::string heat = "isothermal";
};

std::string single_reaction_case(const Spec& s) {
  return fmt::format(R"(title: hard case (invented data)
species:
  - {{id: A, thermo: {{cp: {cp} J/mol/K}}}}
  - {{id: B, thermo: {{cp: {cp} J/mol/K}}}}
reactions:
  - id: r1
    equation: A => B
    rate: {{A: {k:.17g} 1/s, Ea: {Ea:.17g} J/mol, T_ref: {Tref:.17g} K}}
    dH: {dH:.17g} J/mol
feed: {{T: {T0:.17g} K, P: {P:.17g} Pa, flows: {{A: {Ft:.17g} mol/s}}}}
key: A
train:
  - {{type: {type}, id: R1, volume: {V:.17g} m3, heat: {heat}}}
)",
                     fmt::arg("cp", s.cp), fmt::arg("k", s.k_ref), fmt::arg("Ea", s.Ea),
                     fmt::arg("Tref", s.T_ref), fmt::arg("dH", s.dH), fmt::arg("T0", s.T0),
                     fmt::arg("P", s.P), fmt::arg("Ft", s.Ft), fmt::arg("type", s.type),
                     fmt::arg("V", s.V), fmt::arg("heat", s.heat));
}

TrainResult run_text(const std::string& text, const TrainOptions& options = {}) {
  const UnitParser units;
  const Case c = load_case_from_string(text, "hard.yaml", units);
  TrainResult r = run_train(c, options);
  check_finite(r);  // no NaN or Inf anywhere in a hard case either
  return r;
}

double k_of(const Spec& s, double T) {
  return s.k_ref * std::exp(-s.Ea / kR * (1 / T - 1 / s.T_ref));
}

// The PFR above, integrated by GSL to V; returns {F_A, T}.
std::vector<double> gsl_pfr(const Spec& s, bool adiabatic) {
  struct Params {
    const Spec* s;
    bool adiabatic;
  } p{&s, adiabatic};
  auto rhs = [](double, const double y[], double dydt[], void* params) -> int {
    const auto* q = static_cast<const Params*>(params);
    const Spec& sp = *q->s;
    const double T = y[1];
    const double r = k_of(sp, T) * std::max(y[0], 0.0) * sp.P / (sp.Ft * kR * T);
    dydt[0] = -r;
    dydt[1] = q->adiabatic ? -sp.dH * r / (sp.Ft * sp.cp) : 0.0;
    return GSL_SUCCESS;
  };
  gsl_odeiv2_system sys{rhs, nullptr, 2, &p};
  gsl_odeiv2_driver* d =
      gsl_odeiv2_driver_alloc_y_new(&sys, gsl_odeiv2_step_rk8pd, s.V * 1e-9, 1e-13, 1e-13);
  gsl_odeiv2_driver_set_nmax(d, 0);
  double V = 0;
  double y[2] = {s.Ft, s.T0};
  const int status = gsl_odeiv2_driver_apply(d, &V, s.V, y);
  gsl_odeiv2_driver_free(d);
  REQUIRE(status == GSL_SUCCESS);
  return {y[0], y[1]};
}

const StageResult& only_stage(const TrainResult& r) {
  REQUIRE(r.stages.size() == 1);
  return r.stages[0];
}

}  // namespace

TEST_CASE("hard: stiffness ratio above 1e8 (A -> B -> C, k1/k2 = 1e9)", "[hard]") {
  // Consecutive first-order reactions in an isothermal PFR with constant
  // volumetric flow: F_A = F_A0 e^{-k1 t}, F_B = F_A0 k1/(k2-k1) (e^{-k1 t} - e^{-k2 t}),
  // t = V P / (F_t R T) (analytic solution of the linear system).
  const double k1 = 1e6, k2 = 1e-3, T = 500, P = 1e5, Ft = 1, V = 20;
  const std::string text = fmt::format(R"(title: stiff consecutive (invented data)
species: [{{id: A}}, {{id: B}}, {{id: C}}]
reactions:
  - {{id: fast, equation: A => B, rate: {{A: {} 1/s, Ea: 0 J/mol}}, dH: 0 J/mol}}
  - {{id: slow, equation: B => C, rate: {{A: {} 1/s, Ea: 0 J/mol}}, dH: 0 J/mol}}
feed: {{T: {} K, P: {} Pa, flows: {{A: {} mol/s}}}}
key: A
train:
  - {{type: pfr, id: R1, volume: {} m3, heat: isothermal}}
)",
                                       k1, k2, T, P, Ft, V);
  const TrainResult run_s = run_text(text);
  const auto& s = only_stage(run_s);
  const double t = V * P / (Ft * kR * T);
  const double FB = Ft * k1 / (k2 - k1) * (std::exp(-k1 * t) - std::exp(-k2 * t));
  CHECK(s.outlet.F[0] == Approx(0).margin(1e-12));
  CHECK(s.outlet.F[1] == Approx(FB).epsilon(1e-6));
  CHECK(s.outlet.F[2] == Approx(Ft - FB).epsilon(1e-6));
}

TEST_CASE("hard: activation energy 300 kJ/mol, adiabatic ignition in the bed", "[hard]") {
  Spec s;
  s.T0 = 480;
  s.T_ref = 500;
  s.k_ref = 0.01;
  s.Ea = 300e3;
  s.dH = -10e3;  // adiabatic rise 100 K at full conversion
  s.V = 100;
  s.heat = "adiabatic";
  const TrainResult run_st = run_text(single_reaction_case(s));
  const auto& st = only_stage(run_st);
  const auto ref = gsl_pfr(s, true);
  CHECK(st.outlet.F[0] == Approx(ref[0]).epsilon(1e-5).margin(1e-9));
  CHECK(st.outlet.T == Approx(ref[1]).epsilon(1e-7));
  CHECK(st.outlet.T - s.T0 > 50);  // it did ignite
}

TEST_CASE("hard: a feed already at equilibrium does not move", "[hard]") {
  // A <=> B with K = 1 (given at the feed T, dH 0) and x_A = x_B: the
  // reaction quotient equals K, so every rate is exactly zero.
  const std::string text = R"(title: at equilibrium (invented data)
species:
  - {id: A, thermo: {cp: 100 J/mol/K}}
  - {id: B, thermo: {cp: 100 J/mol/K}}
reactions:
  - id: r1
    equation: A <=> B
    rate: {A: 5 1/s, Ea: 50 kJ/mol, T_ref: 450 K}
    dH: 0 J/mol
    equilibrium: {K: 1, T: 450 K, dH: 0 J/mol}
feed: {T: 450 K, P: 2 bar, flow: 1 mol/s, composition: {A: 0.5, B: 0.5}}
key: A
train:
  - {type: pfr, id: R1, volume: 3 m3}
  - {type: cstr, id: R2, volume: 3 m3}
)";
  const TrainResult r = run_text(text);
  REQUIRE(r.stages.size() == 2);
  for (const auto& s : r.stages) {
    INFO(s.id);
    CHECK(s.outlet.F[0] == Approx(0.5).epsilon(1e-12));
    CHECK(s.outlet.F[1] == Approx(0.5).epsilon(1e-12));
    CHECK(s.outlet.T == Approx(450).epsilon(1e-12));
    CHECK(s.conversion == Approx(0).margin(1e-12));
  }
}

TEST_CASE("hard: a trace species at 1e-12 mole fraction keeps its own accuracy", "[hard]") {
  // Two independent first-order reactions; the trace one, C -> D, follows
  // F_C = F_C0 e^{-k t} (analytic), however small F_C0 is.
  const double T = 500, P = 1e5, Ft = 1, V = 1, kA = 0.1, kC = 0.2, xC = 1e-12;
  const std::string text = fmt::format(R"(title: trace species (invented data)
species: [{{id: A}}, {{id: B}}, {{id: C}}, {{id: D}}]
reactions:
  - {{id: main, equation: A => B, rate: {{A: {} 1/s, Ea: 0 J/mol}}, dH: 0 J/mol}}
  - {{id: trace, equation: C => D, rate: {{A: {} 1/s, Ea: 0 J/mol}}, dH: 0 J/mol}}
feed: {{T: {} K, P: {} Pa, flows: {{A: {:.17g} mol/s, C: {:.17g} mol/s}}}}
key: A
train:
  - {{type: pfr, id: R1, volume: {} m3, heat: isothermal}}
)",
                                       kA, kC, T, P, Ft * (1 - xC), Ft * xC, V);
  const TrainResult run_s = run_text(text);
  const auto& s = only_stage(run_s);
  const double t = V * P / (Ft * kR * T);
  CHECK(s.outlet.F[0] == Approx(Ft * (1 - xC) * std::exp(-kA * t)).epsilon(1e-6));
  CHECK(s.outlet.F[2] == Approx(Ft * xC * std::exp(-kC * t)).epsilon(1e-4));
  CHECK(s.outlet.F[3] == Approx(Ft * xC * (1 - std::exp(-kC * t))).epsilon(1e-4));
}

TEST_CASE("hard: a species with zero feed everywhere stays at exactly zero", "[hard]") {
  // Reversible first-order A <=> B, B absent from the feed, inert I absent
  // everywhere: C_A = C_eq + (C_A0 - C_eq) e^{-k (1 + 1/K) t}, C_eq = C_A0/(1+K)
  // (analytic, isothermal, constant volumetric flow).
  const double T = 450, P = 2e5, Ft = 1, V = 2, k = 0.05, K = 3;
  const std::string text = fmt::format(R"(title: zero feed species (invented data)
species: [{{id: A}}, {{id: B}}, {{id: I}}]
reactions:
  - id: r1
    equation: A <=> B
    rate: {{A: {} 1/s, Ea: 0 J/mol}}
    dH: 0 J/mol
    equilibrium: {{K: {}, T: {} K, dH: 0 J/mol}}
feed: {{T: {} K, P: {} Pa, flows: {{A: {} mol/s, I: 0 mol/s}}}}
key: A
train:
  - {{type: pfr, id: R1, volume: {} m3, heat: isothermal}}
  - {{type: cstr, id: R2, volume: {} m3, heat: isothermal}}
)",
                                       k, K, T, T, P, Ft, V, V);
  const TrainResult r = run_text(text);
  REQUIRE(r.stages.size() == 2);
  const double t = V * P / (Ft * kR * T);
  const double FA_eq = Ft / (1 + K);
  const double FA1 = FA_eq + (Ft - FA_eq) * std::exp(-k * (1 + 1 / K) * t);
  CHECK(r.stages[0].outlet.F[0] == Approx(FA1).epsilon(1e-6));
  // Stirred tank, linear: F_A1 - F_A = k t (F_A - (F_t - F_A)/K)  =>  F_A.
  const double FA2 = (FA1 + k * t * Ft / K) / (1 + k * t * (1 + 1 / K));
  CHECK(r.stages[1].outlet.F[0] == Approx(FA2).epsilon(1e-8));
  for (const auto& s : r.stages) {
    CHECK(s.outlet.F[2] == 0.0);
    for (const auto& p : s.profile) CHECK(p.F[2] == 0.0);
  }
}

TEST_CASE("hard: adiabatic CSTR with three steady states, each a true root", "[hard]") {
  // Mass balance X = k th / (1 + k th), th = V P / (F_t R T); energy balance
  // X = cp (T - T0) / (-dH). Their intersections, found independently with
  // GSL's Brent solver on a fine bracket scan, are the three steady states.
  Spec s;
  s.type = "cstr";
  s.heat = "adiabatic";
  s.T0 = 300;
  s.P = 1e5;
  s.k_ref = 1;
  s.T_ref = 400;
  s.Ea = 100e3;
  s.dH = -20e3;
  s.V = 1;
  const TrainResult run_st = run_text(single_reaction_case(s));
  const auto& st = only_stage(run_st);

  struct G {
    static double f(double T, void* p) {
      const Spec& q = *static_cast<const Spec*>(p);
      const double kth = k_of(q, T) * q.V * q.P / (q.Ft * kR * T);
      return q.cp * (T - q.T0) / (-q.dH) - kth / (1 + kth);
    }
  };
  gsl_function fn{&G::f, &s};
  std::vector<double> roots;
  gsl_root_fsolver* solver = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
  const double T_hi = s.T0 + (-s.dH) / s.cp + 1;
  for (double a = s.T0 + 1e-6; a < T_hi; a += 0.05) {
    const double b = a + 0.05;
    if (G::f(a, &s) * G::f(b, &s) > 0) continue;
    gsl_root_fsolver_set(solver, &fn, a, b);
    for (int it = 0; it < 200; ++it) {
      gsl_root_fsolver_iterate(solver);
      if (gsl_root_test_interval(gsl_root_fsolver_x_lower(solver), gsl_root_fsolver_x_upper(solver),
                                 0, 1e-12) == GSL_SUCCESS)
        break;
    }
    roots.push_back(gsl_root_fsolver_root(solver));
  }
  gsl_root_fsolver_free(solver);
  REQUIRE(roots.size() == 3);

  REQUIRE(st.steady_states.size() == 3);
  for (std::size_t i = 0; i < 3; ++i) {
    const auto& ss = st.steady_states[i];
    INFO("steady state " << i + 1 << ": T = " << ss.T);
    CHECK(ss.T == Approx(roots[i]).epsilon(1e-8));
    // A true root of both balances, not just near the reference.
    const double kth = k_of(s, ss.T) * s.V * s.P / (s.Ft * kR * ss.T);
    CHECK(ss.F[0] * (1 + kth) == Approx(s.Ft).epsilon(1e-9));
    CHECK(s.cp * (ss.T - s.T0) / (-s.dH) == Approx(ss.X).epsilon(1e-8));
  }
}

TEST_CASE("hard: endothermic adiabatic bed cools by more than 150 K", "[hard]") {
  Spec s;
  s.T0 = 800;
  s.T_ref = 800;
  s.k_ref = 1;
  s.Ea = 80e3;
  s.dH = 40e3;  // adiabatic drop 400 K at full conversion
  s.V = 1;
  s.heat = "adiabatic";
  const TrainResult run_st = run_text(single_reaction_case(s));
  const auto& st = only_stage(run_st);
  const auto ref = gsl_pfr(s, true);
  CHECK(s.T0 - st.outlet.T > 150);
  CHECK(st.outlet.T == Approx(ref[1]).epsilon(1e-7));
  CHECK(st.outlet.F[0] == Approx(ref[0]).epsilon(1e-6));
  CHECK(st.T_min == Approx(st.outlet.T).epsilon(1e-12));
}

TEST_CASE("hard: very small (1e-6 m3) and very large (1e4 m3) volumes", "[hard]") {
  // Isothermal first order: X = 1 - e^{-k t}, t = V P / (F_t R T) (analytic).
  for (const double V : {1e-6, 1e4}) {
    Spec s;
    s.V = V;
    s.Ft = V == 1e-6 ? 1e-6 : 1e3;
    s.k_ref = V == 1e-6 ? 0.05 : 0.005;
    for (const char* type : {"pfr", "cstr"}) {
      s.type = type;
      INFO(type << " V = " << V);
      const TrainResult run_st = run_text(single_reaction_case(s));
      const auto& st = only_stage(run_st);
      const double kt = s.k_ref * V * s.P / (s.Ft * kR * s.T0);
      CHECK(kt > 0.5);
      CHECK(kt < 5);  // a conversion worth checking, neither ~0 nor ~1
      const double X = s.type == "pfr" ? 1 - std::exp(-kt) : kt / (1 + kt);
      CHECK(st.conversion == Approx(X).epsilon(1e-7));
      CHECK(*st.volume == Approx(V).epsilon(1e-12));
    }
  }
}

TEST_CASE("hard: a CVODE failure names the stage, the position, the reason and a remedy",
          "[hard]") {
  Spec s;
  s.Ea = 300e3;
  s.T0 = 480;
  s.k_ref = 0.01;
  s.dH = -10e3;
  s.V = 100;
  s.heat = "adiabatic";
  TrainOptions options;
  options.solvers.tube.cvode.max_steps = 5;  // far too few: the integration must stop early
  try {
    run_text(single_reaction_case(s), options);
    FAIL("ran with 5 steps");
  } catch (const SolverError& e) {
    const std::string m = e.what();
    INFO(m);
    CHECK_THAT(m, Catch::Contains("R1"));
    CHECK_THAT(m, Catch::Contains("at V = "));
    CHECK_THAT(m, Catch::Contains("max_steps"));
    CHECK_THAT(m, Catch::Contains("try"));
  }
}

TEST_CASE("hard: a Newton failure names the stage, the volume, the reason and a remedy", "[hard]") {
  Spec s;
  s.type = "cstr";
  s.heat = "adiabatic";
  s.T0 = 300;
  s.k_ref = 1;
  s.T_ref = 400;
  s.Ea = 100e3;
  s.dH = -20e3;
  TrainOptions options;
  options.solvers.newton.max_iterations = 1;
  options.solvers.tank_continuation_steps = 1;
  try {
    run_text(single_reaction_case(s), options);
    FAIL("converged in one iteration");
  } catch (const SolverError& e) {
    const std::string m = e.what();
    INFO(m);
    CHECK_THAT(m, Catch::Contains("R1"));
    CHECK_THAT(m, Catch::Contains("V = 1 m3"));
    CHECK_THAT(m, Catch::Contains("iterations"));
    CHECK_THAT(m, Catch::Contains("try"));
  }
}
