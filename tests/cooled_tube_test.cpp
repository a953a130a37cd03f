// Cooled multitubular stages: the heat through the tube walls, U (4 / d)
// (T - T_c) per bed volume, with a constant coolant or a flowing one
// (cocurrent: a state of the balances; countercurrent: shooting on the
// coolant's outlet). Checked against the closed form of a tube without
// reaction in a constant-temperature jacket, the effectiveness-NTU
// relations of parallel- and counter-flow exchangers (Incropera, DeWitt,
// Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., ch.
// 11, Table 11.3), GSL's rk8pd integrating a reacting cooled bed written
// here, the energy balance of the stage and central differences of the
// right-hand side. All kinetic and physical data are invented for the
// tests.
#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <numbers>
#include <sstream>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/models/tubular_balances.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "test_species.hpp"

using namespace rxtrain;
using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;
using rxtrain::test::make_species;

namespace {

constexpr double kCpA = 90, kCpB = 40, kCpI = 30;  // J/(mol K)

// A => 2B, per kg of catalyst, first order in A's partial pressure; with
// `order_on_B` the rate is first order in B instead, so that a feed
// without B never reacts (a tube without reaction, exactly).
Mechanism a_to_2b(double k0, double Ea, double T0, double dH, bool order_on_B = false) {
  Reaction r;
  r.id = "R";
  r.equation = "A => 2 B";
  r.nu = {-1, 2, 0};
  r.rate.orders = order_on_B ? std::vector<double>{0, 1, 0} : std::vector<double>{1, 0, 0};
  r.rate.A = k0;
  r.rate.Ea = Ea;
  r.rate.T_ref = T0;
  r.rate.basis = RateBasis::Catalyst;
  r.rate.driving = Driving::Pressure;
  r.dH_298 = dH;
  return Mechanism(Phase::Gas,
                   {make_species("A", kCpA, 0.0, 200.0, 0.058, 700),
                    make_species("B", kCpB, 0.0, 150.0, 0.029, 650),
                    make_species("I", kCpI, 0.0, 190.0, 0.028, 800)},
                   {r});
}

constexpr int kTubes = 500;
constexpr double kTubeD = 0.04;  // m

ReactorSpec cooled_tube(double V, CoolingSpec cooling) {
  ReactorSpec s;
  s.id = "R1";
  s.volume = V;
  s.bulk_density = 800;
  s.geometry = BedGeometry{kTubes, kTubeD, std::nullopt, 0.4, {}};
  s.cooling = cooling;
  s.where = {"case.yaml", 12, 5};
  return s;
}

CoolingSpec coolant(double U, double T, CoolantFlow dir = CoolantFlow::Constant,
                    std::optional<double> flow = std::nullopt,
                    std::optional<double> cp = std::nullopt) {
  CoolingSpec c;
  c.U = U;
  c.T = T;
  c.direction = dir;
  c.flow = flow;
  c.cp = cp;
  return c;
}

PfrOptions tight() {
  PfrOptions o;
  o.cvode.rtol = 1e-12;
  o.cvode.atol = 1e-12;
  return o;
}

}  // namespace

TEST_CASE("a tube without reaction in a constant coolant approaches it exponentially", "[cooled]") {
  // Constant cp, no reaction: C dT/dV = -U a (T - T_c), a = 4 / d, so
  // T - T_c = (T_0 - T_c) exp(-U a V / C) (the plug-flow form of
  // Incropera ch. 8, eq. 8.42b, with a constant surface temperature).
  const Mechanism mech = a_to_2b(1e-7, 60e3, 600, -50e3, /*order_on_B=*/true);
  const double U = 150, Tc = 520, T0 = 650, V = 0.9;
  const Stream inlet{T0, 5e5, {10.0, 0.0, 40.0}};
  const double C = 10 * kCpA + 40 * kCpI;
  SunContext ctx;
  const auto form = GENERATE(JacobianForm::Dense, JacobianForm::Sparse);
  INFO((form == JacobianForm::Dense ? "dense" : "sparse"));
  PfrOptions o = tight();
  o.jacobian = form;
  const StageResult r =
      run_pfr(mech, cooled_tube(V, coolant(U, Tc)), inlet, ConversionBasis{0, 10.0}, ctx, o);
  const double a = 4 / kTubeD;
  for (const auto& p : r.profile) {
    const double expected = (T0 - Tc) * std::exp(-U * a * p.V / C);
    INFO("V = " << p.V);
    CHECK(std::abs((p.T - Tc) - expected) <= 1e-9 * (T0 - Tc));
    REQUIRE(p.T_coolant);
    CHECK(*p.T_coolant == Tc);
  }
  const double out = (T0 - Tc) * std::exp(-U * a * V / C);
  CHECK(std::abs((r.outlet.T - Tc) - out) <= 1e-9 * (T0 - Tc));
  // duty = heat added to the stream = C (T_out - T_0).
  CHECK(r.duty == Approx(C * (r.outlet.T - T0)).epsilon(1e-9));
  REQUIRE(r.coolant);
  CHECK(r.coolant->T_in == Tc);
  CHECK(r.coolant->T_out == Tc);
  CHECK(r.coolant->duty == r.duty);
  CHECK(r.coolant->area == Approx(V * a).epsilon(1e-14));
  // Without reaction the hottest point is the inlet, and so is the
  // largest difference.
  REQUIRE(r.hot_spot);
  CHECK(r.hot_spot->T == T0);
  CHECK(r.hot_spot->V == 0);
  CHECK(r.coolant->dT_max == T0 - Tc);
}

TEST_CASE("a flowing coolant without reaction matches the effectiveness-NTU relations",
          "[cooled]") {
  // Incropera et al., Fundamentals of Heat and Mass Transfer, ch. 11,
  // Table 11.3: with C_r = C_min / C_max and NTU = U A / C_min,
  //   parallel flow: eps = (1 - exp(-NTU (1 + C_r))) / (1 + C_r)
  //   counter flow:  eps = (1 - exp(-NTU (1 - C_r))) / (1 - C_r exp(-NTU (1 - C_r)))
  // and q = eps C_min (T_h,in - T_c,in). The process gas is the hot side.
  const Mechanism mech = a_to_2b(1e-7, 60e3, 600, -50e3, /*order_on_B=*/true);
  const double U = 150, T_hot = 650, T_cold = 480, V = 0.9;
  const Stream inlet{T_hot, 5e5, {10.0, 0.0, 40.0}};
  const double C_h = 10 * kCpA + 40 * kCpI;  // W/K
  const double A = V * 4 / kTubeD;
  SunContext ctx;
  // The coolant's heat capacity flow above and below the gas's.
  const double cp_c = 1500;
  for (const double m_c : {0.9, 2.4}) {
    const double C_c = m_c * cp_c;
    const double C_min = std::min(C_h, C_c), C_max = std::max(C_h, C_c);
    const double Cr = C_min / C_max, NTU = U * A / C_min;
    for (const CoolantFlow dir : {CoolantFlow::Cocurrent, CoolantFlow::Countercurrent}) {
      for (const JacobianForm form : {JacobianForm::Dense, JacobianForm::Sparse}) {
        INFO("m_c = " << m_c << (dir == CoolantFlow::Cocurrent ? " cocurrent" : " countercurrent")
                      << (form == JacobianForm::Dense ? " dense" : " sparse"));
        const double eps =
            dir == CoolantFlow::Cocurrent
                ? (1 - std::exp(-NTU * (1 + Cr))) / (1 + Cr)
                : (1 - std::exp(-NTU * (1 - Cr))) / (1 - Cr * std::exp(-NTU * (1 - Cr)));
        const double q = eps * C_min * (T_hot - T_cold);
        PfrOptions o = tight();
        o.jacobian = form;
        const StageResult r = run_pfr(mech, cooled_tube(V, coolant(U, T_cold, dir, m_c, cp_c)),
                                      inlet, ConversionBasis{0, 10.0}, ctx, o);
        REQUIRE(r.coolant);
        CHECK(r.duty == Approx(-q).epsilon(1e-8));
        CHECK(r.outlet.T == Approx(T_hot - q / C_h).epsilon(1e-8));
        CHECK(r.coolant->T_in == Approx(T_cold).epsilon(1e-8));
        CHECK(r.coolant->T_out == Approx(T_cold + q / C_c).epsilon(1e-8));
        CHECK(r.coolant->direction == dir);
      }
    }
  }
}

TEST_CASE("a reacting bed with a cocurrent coolant agrees with GSL", "[cooled]") {
  // States F_A, F_B, T, T_c along V: r = rho_b k(T) y_A P per m3 of bed,
  // dH(T) = dH_298 + (2 cp_B - cp_A)(T - 298.15) (Kirchhoff), the wall's
  // heat Ua (T - T_c) with Ua = U 4 / d, and the coolant's balance
  // m_c cp_c dT_c/dV = Ua (T - T_c).
  GslNoAbort no_abort;
  constexpr double k0 = 1e-7, Ea = 80e3, T0 = 600, dH298 = -90e3, rho_b = 800;
  const Mechanism mech = a_to_2b(k0, Ea, T0, dH298);
  const double U = 300, Tc0 = 590, m_c = 20.0, cp_c = 1600, V_end = 1.5, FI = 40;
  const double Ua = U * 4 / kTubeD;
  const Stream inlet{T0, 5e5, {10.0, 0.0, FI}};
  GslOde ode(4, [&](double, const double* y, double* dy) {
    const double FA = y[0], FB = y[1], T = y[2], Tc = y[3];
    const double Ft = FA + FB + FI;
    const double k = k0 * std::exp(-Ea / kGasConstant * (1 / T - 1 / T0));
    const double r = rho_b * k * FA / Ft * 5e5;
    const double dH = dH298 + (2 * kCpB - kCpA) * (T - kReferenceT);
    const double w = Ua * (T - Tc);
    dy[0] = -r;
    dy[1] = 2 * r;
    dy[2] = (-dH * r - w) / (FA * kCpA + FB * kCpB + FI * kCpI);
    dy[3] = w / (m_c * cp_c);
  });
  SunContext ctx;
  PfrOptions o;
  o.cvode.rtol = 1e-11;
  o.cvode.atol = 1e-12;
  const auto form = GENERATE(JacobianForm::Dense, JacobianForm::Sparse);
  o.jacobian = form;
  INFO((form == JacobianForm::Dense ? "dense" : "sparse"));
  const StageResult res =
      run_pfr(mech, cooled_tube(V_end, coolant(U, Tc0, CoolantFlow::Cocurrent, m_c, cp_c)), inlet,
              ConversionBasis{0, 10.0}, ctx, o);
  std::vector<double> y{10.0, 0.0, T0, Tc0};
  double V_prev = 0;
  int compared = 0;
  for (const auto& p : res.profile) {
    if (p.V > V_prev) ode.advance(V_prev, p.V, y);
    V_prev = p.V;
    INFO("V = " << p.V);
    REQUIRE(p.T_coolant);
    CHECK(p.F[0] == Approx(y[0]).epsilon(1e-7));
    CHECK(p.T == Approx(y[2]).epsilon(1e-7));
    CHECK(*p.T_coolant == Approx(y[3]).epsilon(1e-7));
    ++compared;
  }
  CHECK(compared >= 10);
  // The bed has a hot spot inside it (T rises, then the coolant wins).
  REQUIRE(res.hot_spot);
  CHECK(res.hot_spot->T > T0 + 5);
  CHECK(res.hot_spot->T > res.outlet.T + 5);
  CHECK(res.hot_spot->V > 0);
  CHECK(res.hot_spot->V < V_end);
  CHECK(res.hot_spot->z ==
        Approx(res.hot_spot->V / (kTubes * std::numbers::pi / 4 * kTubeD * kTubeD)).epsilon(1e-14));
  CHECK(res.conversion > 0.3);
}

TEST_CASE("the energy balance of a reacting cooled bed closes", "[cooled]") {
  // Process: the sensible enthalpy change plus the heat of reaction at
  // 298.15 K times the extent equals the heat added (Hess's law on the
  // path 298.15 K); coolant: m_c cp_c (T_out - T_in) = -duty.
  constexpr double dH298 = -90e3;
  const Mechanism mech = a_to_2b(1e-7, 80e3, 600, dH298);
  const double m_c = 20.0, cp_c = 1600;
  const Stream inlet{600, 5e5, {10.0, 0.0, 40.0}};
  SunContext ctx;
  for (const CoolantFlow dir : {CoolantFlow::Cocurrent, CoolantFlow::Countercurrent}) {
    INFO((dir == CoolantFlow::Cocurrent ? "cocurrent" : "countercurrent"));
    const StageResult r = run_pfr(mech, cooled_tube(1.5, coolant(300, 590, dir, m_c, cp_c)), inlet,
                                  ConversionBasis{0, 10.0}, ctx, tight());
    const double extent = inlet.F[0] - r.outlet.F[0];
    const double dH_process = mech.sensible_enthalpy_flow(r.outlet.T, r.outlet.F.data()) -
                              mech.sensible_enthalpy_flow(inlet.T, inlet.F.data()) + extent * dH298;
    CHECK(dH_process == Approx(r.duty).epsilon(1e-8));
    REQUIRE(r.coolant);
    CHECK(m_c * cp_c * (r.coolant->T_out - r.coolant->T_in) == Approx(-r.duty).epsilon(1e-8));
    CHECK(r.duty < 0);
  }
}

TEST_CASE("the analytic Jacobian of a cooled tube agrees with central differences", "[cooled]") {
  const Mechanism mech = a_to_2b(1e-7, 60e3, 600, -50e3);
  const std::vector<double> beta{800.0};
  detail::HydraulicBinding h{0.2, 1.7, 3e-3, 0.4, ViscosityLaw{3e-5, 700, 0.7}};
  for (const bool with_P : {false, true}) {
    for (const double inv_mcp : {0.0, 1 / 4000.0}) {
      for (const double sign : {1.0, -1.0}) {
        INFO("pressure " << with_P << " inv_mcp " << inv_mcp << " sign " << sign);
        detail::CoolingBinding c{3000, 560, inv_mcp, sign};
        detail::PfrSystem sys;
        sys.reset(mech, beta, HeatMode::Adiabatic, 5e5, nullptr, with_P ? &h : nullptr, &c);
        const int N = sys.size();
        REQUIRE(N == 5 + (with_P ? 1 : 0) + (inv_mcp != 0 ? 1 : 0));
        std::vector<double> y{6.0, 7.0, 40.0, 640.0, 1234.0};
        if (with_P) y.push_back(4.2e5);
        if (inv_mcp != 0) y.push_back(575.0);
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
      }
    }
  }
}

TEST_CASE("a cooled stage in a case file reads its coolant in SI", "[cooled]") {
  const std::string text = R"(title: t
phase: gas
species:
  - {id: NC5, formula: C5H12, thermo: {h_f: -146.8 kJ/mol, s: 349.0 J/mol/K, cp: 120 J/mol/K}}
  - {id: IC5, formula: C5H12, thermo: {h_f: -153.6 kJ/mol, s: 343.7 J/mol/K, cp: 118 J/mol/K}}
reactions:
  - id: isom
    equation: NC5 <=> IC5
    rate: {per: catalyst, A: 3.0e-2 mol/(kg*s*bar), Ea: 65 kJ/mol, driving: pressure}
    equilibrium: thermo
feed: {T: 130 degC, P: 25 bar, flow: 50 kmol/h, composition: {NC5: 0.95, IC5: 0.05}}
key: NC5
train:
  - type: pfr
    id: R1
    catalyst: 2000 kg
    bulk_density: 750 kg/m3
    tubes: {count: 100, diameter: 40 mm, void_fraction: 0.4}
    heat: {U: 200 W/m2/K, coolant: {T_in: 120 degC, flow: 3 kg/s, cp: 1.6 kJ/kg/K, direction: countercurrent}}
)";
  UnitParser units;
  const Case c = load_case_from_string(text, "case.yaml", units);
  const auto& r = std::get<ReactorSpec>(c.train[0]);
  REQUIRE(r.cooling);
  CHECK(r.cooling->U == 200);
  CHECK(r.cooling->T == Approx(393.15).epsilon(1e-14));
  CHECK(r.cooling->direction == CoolantFlow::Countercurrent);
  CHECK(*r.cooling->flow == 3);
  CHECK(*r.cooling->cp == Approx(1600).epsilon(1e-14));
  CHECK(r.heat == HeatMode::Adiabatic);
  // A case built in code passes the loader's checks (validate_case).
  CHECK_NOTHROW(validate_case(c));
  Case no_tubes = c;
  std::get<ReactorSpec>(no_tubes.train[0]).geometry.reset();
  CHECK_THROWS_WITH(validate_case(no_tubes), Catch::Contains("cooled but gives no tubes"));
  Case no_flow = c;
  std::get<ReactorSpec>(no_flow.train[0]).cooling->flow.reset();
  CHECK_THROWS_WITH(validate_case(no_flow), Catch::Contains("positive flow and cp"));
}

TEST_CASE("a countercurrent stage with several steady states is refused, naming them", "[cooled]") {
  // A strongly exothermic reaction with a weak, countercurrent coolant:
  // the heat the coolant carries back to the inlet can ignite the bed, so
  // an extinguished state near 500 K and ignited ones coexist (the
  // multiplicity of autothermal reactors; invented data).
  const std::string text = R"(title: several steady states (invented)
phase: gas
species:
  - {id: A, formula: C4H10, thermo: {cp: 90 J/mol/K, h_f: 0 J/mol}}
  - {id: B, formula: C2H5, thermo: {cp: 40 J/mol/K, h_f: 0 J/mol}}
  - {id: I, formula: N2, thermo: {cp: 30 J/mol/K, h_f: 0 J/mol}}
reactions:
  - id: R
    equation: A => 2 B
    rate: {per: volume, A: 1e-5 mol/(m3*s*Pa), Ea: 150 kJ/mol, T_ref: 600 K, driving: pressure, orders: {A: 1}}
    dH: -150 kJ/mol
feed: {T: 500 K, P: 5 bar, flows: {A: 10 mol/s, I: 40 mol/s}}
key: A
train:
  - type: pfr
    id: R1
    volume: 1 m3
    tubes: {count: 500, diameter: 40 mm, void_fraction: 0.4}
    heat: {U: 20 W/m2/K, coolant: {T_in: 500 K, flow: 1 kg/s, cp: 1 kJ/kg/K, direction: countercurrent}}
)";
  UnitParser units;
  const Case c = load_case_from_string(text, "case.yaml", units);
  const auto& r = std::get<ReactorSpec>(c.train[0]);
  SunContext ctx;
  try {
    run_pfr(c.mechanism, r, c.feed, c.conversion_basis(), ctx, PfrOptions{});
    FAIL("no error");
  } catch (const InfeasibleError& e) {
    CHECK_THAT(e.what(), Catch::Contains("has 3 solutions") &&
                             Catch::Contains("several steady states") &&
                             Catch::Contains("steps of 2 K"));
  }
}

TEST_CASE("a cooled stage sized past what it can reach names the cooled path's limit", "[cooled]") {
  // The cooled demo (a reversible oxidation) with a constant coolant, no
  // pellets and a target beyond the equilibrium near the coolant's
  // temperature: refused, and not as an adiabatic limit.
  std::ifstream in(std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-cooled-multitubular.yaml");
  std::stringstream ss;
  ss << in.rdbuf();
  UnitParser units;
  Case c = load_case_from_string(ss.str(), "so2-cooled-multitubular.yaml", units);
  auto& r = std::get<ReactorSpec>(c.train[0]);
  r.pellet.reset();
  r.cooling->direction = CoolantFlow::Constant;
  r.cooling->flow.reset();
  r.cooling->cp.reset();
  r.catalyst_mass.reset();
  r.volume.reset();
  r.target_conversion = 0.9995;
  SunContext ctx;
  try {
    run_pfr(c.mechanism, r, c.feed, c.conversion_basis(), ctx, PfrOptions{});
    FAIL("no error");
  } catch (const InfeasibleError& e) {
    CHECK_THAT(e.what(), Catch::Contains("out of reach") &&
                             Catch::Contains("the equilibrium limit along the cooled path"));
    CHECK_THAT(e.what(), !Catch::Contains("adiabatic"));
  }
}

TEST_CASE(
    "a countercurrent stage whose coolant outlet lies outside the scan is refused as unsolved",
    "[cooled]") {
  // A fast, strongly endothermic reaction with a small flow of hot heating
  // medium against the gas: the gas falls far below both inlets within the
  // first millimetres of the tubes (adiabatic fall of the feed at full
  // conversion: 10 mol/s * 100 kJ/mol / 2100 W/K = 476 K), and the medium,
  // whose heat capacity flow (50 W/K) is a fortieth of the gas's, leaves
  // at the gas's cold temperature. Its outlet lies far below the scan's
  // lower end (10 K below the lower inlet, 790 K), so no guess of the scan
  // brackets a solution and the stage is refused, naming the scan (invented
  // data).
  const std::string text = R"(title: no bracket (invented)
phase: gas
species:
  - {id: A, formula: C4H10, thermo: {cp: 90 J/mol/K, h_f: 0 J/mol}}
  - {id: B, formula: C2H5, thermo: {cp: 45 J/mol/K, h_f: 0 J/mol}}
  - {id: I, formula: N2, thermo: {cp: 30 J/mol/K, h_f: 0 J/mol}}
reactions:
  - id: R
    equation: A => 2 B
    rate: {per: volume, A: 1 mol/(m3*s*Pa), Ea: 100 kJ/mol, T_ref: 800 K, driving: pressure, orders: {A: 1}}
    dH: 100 kJ/mol
feed: {T: 800 K, P: 5 bar, flows: {A: 10 mol/s, I: 40 mol/s}}
key: A
train:
  - type: pfr
    id: R1
    volume: 1 m3
    tubes: {count: 500, diameter: 40 mm, void_fraction: 0.4}
    heat: {U: 50 W/m2/K, coolant: {T_in: 900 K, flow: 0.05 kg/s, cp: 1 kJ/kg/K, direction: countercurrent}}
)";
  UnitParser units;
  const Case c = load_case_from_string(text, "case.yaml", units);
  const auto& r = std::get<ReactorSpec>(c.train[0]);
  SunContext ctx;
  try {
    run_pfr(c.mechanism, r, c.feed, c.conversion_basis(), ctx, PfrOptions{});
    FAIL("no error");
  } catch (const InfeasibleError& e) {
    CHECK_THAT(e.what(), Catch::Contains("no countercurrent solution found") &&
                             Catch::Contains("from 790.00 to 1300.00 K in steps of 2 K") &&
                             Catch::Contains("brackets no coolant inlet at 900.00 K"));
    CHECK(e.where().line == r.cooling->where.line);
  }
}
