// Rates, their analytic Jacobian, and equilibrium constants, checked against
// finite differences, the definition of the rate law, published thermo data
// and a published correlation.
#include "rxtrain/kinetics/mechanism.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <optional>
#include <random>
#include <string>
#include <vector>

#include "test_species.hpp"

using namespace rxtrain;

namespace {

using rxtrain::test::make_species;

Reaction make_reaction(const std::string& id, std::vector<double> nu, std::vector<double> orders,
                       bool reversible) {
  Reaction r;
  r.id = id;
  r.equation = id;
  r.nu = std::move(nu);
  r.reversible = reversible;
  r.rate.orders = std::move(orders);
  return r;
}

// Invented test mechanism (no source: numbers chosen to exercise every
// branch of the rate law) over species A, B, C, D, I (inert):
//   R1: A + B <=> C   reversible, orders 1 / 0.5 / 0.3 (fractional,
//       including a product order), concentration, van 't Hoff K
//   R2: C => D        irreversible, order 1.3, partial-pressure driving,
//       per-catalyst basis, Arrhenius with T_ref
//   R3: 2 A <=> D     reversible, order 2 / 0.7, pressure driving, K from
//       the species' thermo (constant cp, so d lnK/dT varies with T)
Mechanism make_test_mechanism(Phase phase) {
  std::vector<Species> sp{
      make_species("A", 35.0, -50e3, 200.0, 0.030, 800.0),
      make_species("B", 29.0, 0.0, 130.0, 0.002, 70.0),
      make_species("C", 60.0, -90e3, 260.0, 0.032, 790.0),
      make_species("D", 75.0, -120e3, 300.0, 0.060, 900.0),
      make_species("I", 29.1, 0.0, 191.6, 0.028, 808.0),
  };
  Reaction r1 = make_reaction("R1", {-1, -1, 1, 0, 0}, {1.0, 0.5, 0.3, 0, 0}, true);
  r1.rate.A = 2.0e3;
  r1.rate.Ea = 45e3;
  r1.equilibrium.kind = EquilibriumSource::Kind::VantHoff;
  r1.equilibrium.K_ref = 25.0;
  r1.equilibrium.T_ref = 500.0;
  r1.equilibrium.dH = -40e3;
  r1.dH_298 = -40e3;

  Reaction r2 = make_reaction("R2", {0, 0, -1, 1, 0}, {0, 0, 1.3, 0, 0}, false);
  r2.rate.basis = RateBasis::Catalyst;
  r2.rate.driving = Driving::Pressure;
  r2.rate.A = 3.0e-4;
  r2.rate.Ea = 80e3;
  r2.rate.T_ref = 550.0;
  r2.dH_298 = -30e3;

  Reaction r3 = make_reaction("R3", {-2, 0, 0, 1, 0}, {2.0, 0, 0, 0.7, 0}, true);
  r3.rate.driving = Driving::Pressure;
  r3.rate.A = 1.0e-9;
  r3.rate.Ea = 60e3;
  r3.equilibrium.kind = EquilibriumSource::Kind::Thermo;
  r3.dH_298 = -120e3 - 2 * -50e3;
  return Mechanism(phase, sp, {r1, r2, r3});
}

struct State {
  double T, P;
  std::vector<double> F;
};

// Analytic rates_and_jacobian against central differences. The step is 1e-5
// of the variable: truncation error ~1e-10 and round-off ~1e-11 relative, far
// below the 1e-6 asked. Elements are compared relative to the larger of the
// element and the row's natural scale r_j / F_k (or r_j / T).
void check_jacobian(const Mechanism& m, const State& s) {
  const int n = m.n_species();
  const int nr = m.n_reactions();
  std::vector<double> r(nr), rp(nr), rm(nr), r_plain(nr);
  Eigen::MatrixXd J(nr, n);
  Eigen::VectorXd JT(nr);
  m.rates_and_jacobian(s.T, s.P, s.F.data(), r.data(), J, JT);
  m.rates(s.T, s.P, s.F.data(), r_plain.data());
  for (int j = 0; j < nr; ++j) {
    INFO("reaction " << j << " at T = " << s.T);
    CHECK(std::isfinite(r[j]));
    CHECK(r[j] == Approx(r_plain[j]).epsilon(1e-14));
  }
  for (int k = 0; k < n; ++k) {
    std::vector<double> F = s.F;
    const double h = 1e-5 * s.F[k];
    F[k] = s.F[k] + h;
    m.rates(s.T, s.P, F.data(), rp.data());
    F[k] = s.F[k] - h;
    m.rates(s.T, s.P, F.data(), rm.data());
    for (int j = 0; j < nr; ++j) {
      const double fd = (rp[j] - rm[j]) / (2 * h);
      const double scale = std::max(std::abs(J(j, k)), std::abs(r[j]) / s.F[k]);
      INFO("dr" << j << "/dF" << k << " analytic " << J(j, k) << " fd " << fd);
      CHECK(std::abs(J(j, k) - fd) <= 1e-6 * scale);
    }
  }
  const double hT = 1e-5 * s.T;
  m.rates(s.T + hT, s.P, s.F.data(), rp.data());
  m.rates(s.T - hT, s.P, s.F.data(), rm.data());
  for (int j = 0; j < nr; ++j) {
    const double fd = (rp[j] - rm[j]) / (2 * hT);
    const double scale = std::max(std::abs(JT(j)), std::abs(r[j]) / s.T);
    INFO("dr" << j << "/dT analytic " << JT(j) << " fd " << fd);
    CHECK(std::abs(JT(j) - fd) <= 1e-6 * scale);
  }
}

const std::vector<State> kStates{
    {450.0, 2.0e5, {1.0, 2.0, 0.3, 0.1, 5.0}},
    {600.0, 30.0e5, {0.2, 0.05, 1.5, 0.8, 1.0}},
    {800.0, 1.0e5, {3.0, 0.01, 0.001, 2.0, 0.5}},
    {520.0, 10.0e5, {1e-4, 1.0, 1.0, 1e-3, 1e-6}},
};

// WebBook Shomate coefficients from Chase 1998, reference-data.md section 1
// (A..E; T ranges), with the published F, G, H used to get S(298.15 K).
struct ShomateRow {
  std::array<double, 5> c;
  double T_low, T_high, F, G, H;
};
Species shomate_species(const std::string& id, const std::vector<ShomateRow>& rows) {
  CpShomate cp;
  for (const auto& r : rows) cp.sets.push_back({r.c, r.T_low, r.T_high});
  // S at 298.15 K from the WebBook expression S = A ln t + B t + C t^2/2 +
  // D t^3/3 - E/(2 t^2) + G of the first set (extrapolated for H2O, which
  // section 1 notes gives the JANAF value 188.835).
  const auto& r0 = rows.front();
  const double t = kReferenceT / 1000;
  const double s298 = r0.c[0] * std::log(t) + r0.c[1] * t + r0.c[2] * t * t / 2 +
                      r0.c[3] * t * t * t / 3 - r0.c[4] / (2 * t * t) + r0.G;
  Species s;
  s.id = id;
  s.thermo = ThermoModel(cp, r0.H * 1e3, s298);
  return s;
}

// Water-gas shift CO + H2O <=> CO2 + H2 with section 1 data.
Mechanism water_gas_shift() {
  std::vector<Species> sp{
      shomate_species("CO", {{{25.56759, 6.096130, 4.054656, -2.671301, 0.131021},
                              298,
                              1300,
                              -118.0089,
                              227.3665,
                              -110.5271},
                             {{35.15070, 1.300095, -0.205921, 0.013550, -3.282780},
                              1300,
                              6000,
                              -127.8375,
                              231.7120,
                              -110.5271}}),
      shomate_species("H2O", {{{30.09200, 6.832514, 6.793435, -2.534480, 0.082139},
                               500,
                               1700,
                               -250.8810,
                               223.3967,
                               -241.8264},
                              {{41.96426, 8.622053, -1.499780, 0.098119, -11.15764},
                               1700,
                               6000,
                               -272.1797,
                               219.7809,
                               -241.8264}}),
      shomate_species("CO2", {{{24.99735, 55.18696, -33.69137, 7.948387, -0.136638},
                               298,
                               1200,
                               -403.6075,
                               228.2431,
                               -393.5224},
                              {{58.16639, 2.720074, -0.492289, 0.038844, -6.447293},
                               1200,
                               6000,
                               -425.9186,
                               263.6125,
                               -393.5224}}),
      shomate_species("H2", {{{33.066178, -11.363417, 11.432816, -2.772874, -0.158558},
                              298,
                              1000,
                              -9.980797,
                              172.707974,
                              0},
                             {{18.563083, 12.257357, -2.859786, 0.268238, 1.977990},
                              1000,
                              2500,
                              -1.147438,
                              156.288133,
                              0}}),
  };
  Reaction r = make_reaction("WGS", {-1, -1, 1, 1}, {1, 1, 0, 0}, true);
  r.rate.A = 1.0;
  r.rate.driving = Driving::Pressure;
  r.equilibrium.kind = EquilibriumSource::Kind::Thermo;
  r.dH_298 = (-393.5224 + 0 - (-110.5271) - (-241.8264)) * 1e3;
  return Mechanism(Phase::Gas, sp, {r});
}

}  // namespace

TEST_CASE("analytic rate Jacobian matches central differences (gas)", "[mechanism]") {
  const Mechanism m = make_test_mechanism(Phase::Gas);
  for (const State& s : kStates) check_jacobian(m, s);
}

TEST_CASE("analytic rate Jacobian matches central differences (liquid)", "[mechanism]") {
  const Mechanism m = make_test_mechanism(Phase::Liquid);
  for (const State& s : kStates) check_jacobian(m, s);
}

TEST_CASE("rates follow the documented rate law", "[mechanism]") {
  // Definition in kinetics.hpp: r = k prod d^o (1 - Q/K), gas concentration
  // d = F P / (F_t R T), activity a = p / 1 bar; partial pressure d = F P / F_t.
  const Mechanism m = make_test_mechanism(Phase::Gas);
  const State s = kStates[0];
  double Ft = 0;
  for (double f : s.F) Ft += f;
  auto C = [&](int i) { return s.F[i] / Ft * s.P / (kGasConstant * s.T); };
  auto p = [&](int i) { return s.F[i] / Ft * s.P; };
  auto a = [&](int i) { return p(i) / kStandardPressure; };
  std::vector<double> r(3);
  m.rates(s.T, s.P, s.F.data(), r.data());
  const double k1 = 2.0e3 * std::exp(-45e3 / (kGasConstant * s.T));
  const double K1 = 25.0 * std::exp(40e3 / kGasConstant * (1 / s.T - 1 / 500.0));
  const double r1 =
      k1 * C(0) * std::pow(C(1), 0.5) * std::pow(C(2), 0.3) * (1 - a(2) / (a(0) * a(1)) / K1);
  CHECK(r[0] == Approx(r1).epsilon(1e-12));
  const double k2 = 3.0e-4 * std::exp(-80e3 / kGasConstant * (1 / s.T - 1 / 550.0));
  CHECK(r[1] == Approx(k2 * std::pow(p(2), 1.3)).epsilon(1e-12));
  // R3: K from thermo, ln K = -dG/(R T), dG = sum nu (h - T s).
  auto g = [&](double cp, double hf, double s298) {
    return hf + cp * (s.T - kReferenceT) - s.T * (s298 + cp * std::log(s.T / kReferenceT));
  };
  const double dG3 = g(75.0, -120e3, 300.0) - 2 * g(35.0, -50e3, 200.0);
  const double K3 = std::exp(-dG3 / (kGasConstant * s.T));
  CHECK(m.ln_K(2, s.T) == Approx(std::log(K3)).epsilon(1e-12));
  const double k3 = 1.0e-9 * std::exp(-60e3 / (kGasConstant * s.T));
  const double r3 = k3 * p(0) * p(0) * std::pow(p(3), 0.7) * (1 - a(3) / (a(0) * a(0)) / K3);
  CHECK(r[2] == Approx(r3).epsilon(1e-12));
}

TEST_CASE("liquid rates use concentrations from ideal-mixing volume", "[mechanism]") {
  const Mechanism m = make_test_mechanism(Phase::Liquid);
  const State s = kStates[1];
  const std::vector<double> mw{0.030, 0.002, 0.032, 0.060, 0.028};
  const std::vector<double> rho{800.0, 70.0, 790.0, 900.0, 808.0};
  double v = 0;
  for (int i = 0; i < 5; ++i) v += s.F[i] * mw[i] / rho[i];
  CHECK(m.volumetric_flow(s.T, s.P, s.F.data()) == Approx(v).epsilon(1e-14));
  auto C = [&](int i) { return s.F[i] / v; };
  auto a = [&](int i) { return C(i) / 1000.0; };  // 1 mol/L standard state
  std::vector<double> r(3);
  m.rates(s.T, s.P, s.F.data(), r.data());
  const double k1 = 2.0e3 * std::exp(-45e3 / (kGasConstant * s.T));
  const double K1 = 25.0 * std::exp(40e3 / kGasConstant * (1 / s.T - 1 / 500.0));
  CHECK(r[0] == Approx(k1 * C(0) * std::pow(C(1), 0.5) * std::pow(C(2), 0.3) *
                       (1 - a(2) / (a(0) * a(1)) / K1))
                    .epsilon(1e-12));
}

TEST_CASE("reversible rate stays finite when a species is absent", "[mechanism]") {
  // A + B <=> C, elementary orders, liquid and gas.
  for (Phase phase : {Phase::Gas, Phase::Liquid}) {
    std::vector<Species> sp{make_species("A", 30, 0, 100, 0.05, 800),
                            make_species("B", 30, 0, 100, 0.05, 800),
                            make_species("C", 30, 0, 100, 0.10, 800)};
    Reaction r = make_reaction("R", {-1, -1, 1}, {1, 1, 0}, true);
    r.rate.A = 1e-3;
    r.rate.Ea = 0;
    r.equilibrium.kind = EquilibriumSource::Kind::VantHoff;
    r.equilibrium.K_ref = 4.0;
    r.equilibrium.T_ref = 400;
    const Mechanism m(phase, sp, {r});
    const double T = 400, P = 1e5;
    Eigen::MatrixXd J(1, 3);
    Eigen::VectorXd JT(1);
    double rate = 0;

    // Product absent: Q = 0, pure forward rate k C_A C_B.
    std::vector<double> F{1.0, 2.0, 0.0};
    m.rates_and_jacobian(T, P, F.data(), &rate, J, JT);
    const double v = m.volumetric_flow(T, P, F.data());
    CHECK(rate == Approx(1e-3 * (1.0 / v) * (2.0 / v)).epsilon(1e-13));
    CHECK(J.allFinite());
    CHECK(JT.allFinite());

    // Reactant absent: pure reverse rate k C_C / (K s) with a = s C.
    F = {0.0, 2.0, 1.5};
    m.rates_and_jacobian(T, P, F.data(), &rate, J, JT);
    const double v2 = m.volumetric_flow(T, P, F.data());
    const double s = phase == Phase::Gas ? kGasConstant * T / kStandardPressure : 1e-3;
    CHECK(std::isfinite(rate));
    CHECK(rate < 0);
    CHECK(rate == Approx(-1e-3 * (1.5 / v2) / (4.0 * s)).epsilon(1e-13));
    CHECK(J.allFinite());
    CHECK(JT.allFinite());

    // Only the product present.
    F = {0.0, 0.0, 1.0};
    m.rates_and_jacobian(T, P, F.data(), &rate, J, JT);
    CHECK(std::isfinite(rate));
    CHECK(J.allFinite());
  }
}

TEST_CASE("reversible rate vanishes when Q = K", "[mechanism]") {
  // Gas A + B <=> C + I(inert), concentration driving; K at 600 K from a van
  // 't Hoff source. Choose mole fractions with x_C = K x_A x_B P/p0, then
  // Q = a_C / (a_A a_B) = K: r must be zero to round-off of the two terms.
  std::vector<Species> sp{
      make_species("A", 30, 0, 100, 0.05, 800), make_species("B", 30, 0, 100, 0.05, 800),
      make_species("C", 30, 0, 100, 0.10, 800), make_species("I", 30, 0, 100, 0.03, 800)};
  Reaction r = make_reaction("R", {-1, -1, 1, 0}, {1, 1, 0, 0}, true);
  r.rate.A = 5e-2;
  r.rate.Ea = 20e3;
  r.equilibrium.kind = EquilibriumSource::Kind::VantHoff;
  r.equilibrium.K_ref = 3.0;
  r.equilibrium.T_ref = 500;
  r.equilibrium.dH = -25e3;
  const Mechanism m(Phase::Gas, sp, {r});
  for (double T : {450.0, 600.0, 750.0}) {
    const double P = 1e5;
    const double K = std::exp(m.ln_K(0, T));
    const double xA = 0.2, xB = 0.1;
    const double xC = K * xA * xB * P / kStandardPressure;
    REQUIRE(xA + xB + xC < 1);
    std::vector<double> F{xA, xB, xC, 1 - xA - xB - xC};
    double rate = 0;
    m.rates(T, P, F.data(), &rate);
    const double forward =
        m.rate_constant(0, T) * (xA * P / (kGasConstant * T)) * (xB * P / (kGasConstant * T));
    INFO("T = " << T << " r = " << rate << " forward term " << forward);
    CHECK(std::abs(rate) <= 1e-13 * forward);
    // Either side of equilibrium the rate changes sign.
    F[2] *= 1.01;
    m.rates(T, P, F.data(), &rate);
    CHECK(rate < 0);
    F[2] /= 1.01 * 1.01;
    m.rates(T, P, F.data(), &rate);
    CHECK(rate > 0);
  }
}

TEST_CASE("water-gas shift K from Shomate thermo matches published values", "[mechanism]") {
  const Mechanism m = water_gas_shift();
  // Thermo-derived K from the section 1 data, computed in reference-data.md
  // section 5: 500 / 700 / 1000 K = 137.7 / 9.444 / 1.4385 (0.5 %).
  CHECK(std::exp(m.ln_K(0, 500)) == Approx(137.7).epsilon(0.005));
  CHECK(std::exp(m.ln_K(0, 700)) == Approx(9.444).epsilon(0.005));
  CHECK(std::exp(m.ln_K(0, 1000)) == Approx(1.4385).epsilon(0.005));
  // Moe, J.M., Chem. Eng. Prog. 58(3), 1962: ln K = 4577.8/T - 4.33
  // (reference-data.md section 5; correlation vs thermo within ~15 %).
  for (double T : {500.0, 600.0, 700.0, 800.0, 900.0, 1000.0}) {
    INFO("T = " << T);
    CHECK(std::exp(m.ln_K(0, T)) == Approx(std::exp(4577.8 / T - 4.33)).epsilon(0.15));
  }
  // Exothermic: K falls with T; d lnK/dT = dH/(R T^2) (van 't Hoff equation),
  // checked against a central difference of ln K.
  for (double T : {550.0, 800.0, 1100.0, 1500.0}) {
    const double h = 1e-3;
    const double fd = (m.ln_K(0, T + h) - m.ln_K(0, T - h)) / (2 * h);
    INFO("T = " << T);
    CHECK(m.dln_K_dT(0, T) == Approx(fd).epsilon(1e-7));
    CHECK(m.dln_K_dT(0, T) == Approx(m.dH(0, T) / (kGasConstant * T * T)).epsilon(1e-9));
    CHECK(m.dln_K_dT(0, T) < 0);
  }
  // dH(298.15) of the shift from Chase formation enthalpies (section 1 H
  // column): -393.5224 + 110.5271 + 241.8264 = -41.1689 kJ/mol.
  CHECK(m.dH(0, kReferenceT) == Approx(-41.1689e3).epsilon(1e-9));
}

TEST_CASE("van 't Hoff K is exp-linear in 1/T", "[mechanism]") {
  // Integrated van 't Hoff equation with constant dH:
  // ln K(T) = ln K_ref - dH/R (1/T - 1/T_ref).
  std::vector<Species> sp{make_species("A", 30, 0, 100, 0.05, 800),
                          make_species("B", 30, 0, 100, 0.05, 800)};
  Reaction r = make_reaction("R", {-1, 1}, {1, 0}, true);
  r.rate.A = 1;
  r.equilibrium.kind = EquilibriumSource::Kind::VantHoff;
  r.equilibrium.K_ref = 12.5;
  r.equilibrium.T_ref = 600;
  r.equilibrium.dH = -55e3;
  const Mechanism m(Phase::Gas, sp, {r});
  CHECK(std::exp(m.ln_K(0, 600)) == Approx(12.5).epsilon(1e-14));
  // Slope of ln K against 1/T is -dH/R, at any pair of temperatures.
  const double slope = (m.ln_K(0, 400) - m.ln_K(0, 900)) / (1.0 / 400 - 1.0 / 900);
  CHECK(slope == Approx(55e3 / kGasConstant).epsilon(1e-12));
  const double h = 1e-3;
  CHECK(m.dln_K_dT(0, 700) ==
        Approx((m.ln_K(0, 700 + h) - m.ln_K(0, 700 - h)) / (2 * h)).epsilon(1e-7));
  // Exothermic: K at 500 K larger than at 600 K by exp(55e3/R (1/500 - 1/600)).
  CHECK(std::exp(m.ln_K(0, 500)) ==
        Approx(12.5 * std::exp(55e3 / kGasConstant * (1.0 / 500 - 1.0 / 600))).epsilon(1e-12));
}

TEST_CASE("heat of reaction follows Kirchhoff's law", "[mechanism]") {
  const Mechanism m = make_test_mechanism(Phase::Gas);
  // R1: A + B -> C with constant cp: dCp = 60 - 35 - 29 = -4 J/(mol K).
  CHECK(m.dCp(0, 700) == Approx(-4.0).epsilon(1e-14));
  CHECK(m.dH(0, 700) == Approx(-40e3 + -4.0 * (700 - kReferenceT)).epsilon(1e-13));
}

// The rate law written once (Mechanism::evaluate): its value at given
// driving quantities is the documented power law (by hand), and its
// gradient in d matches central differences (finite-difference check,
// step 1e-6 relative: truncation ~1e-12, far below the 1e-7 asked).
TEST_CASE("evaluate gives the rate law's value and its gradient in the driving quantities",
          "[mechanism]") {
  const Mechanism m = make_test_mechanism(Phase::Gas);
  const double T = 560.0;
  // Partial pressures (R2, R3 are pressure-driven), Pa; arbitrary values.
  std::vector<double> d{3.0e5, 1.5e5, 0.8e5, 0.4e5, 1.0e5};
  std::vector<double> g(5, 0.0);
  // R2: C => D, irreversible, order 1.3 in C, Arrhenius with T_ref = 550 K.
  const auto v2 = m.evaluate(1, T, d.data(), g.data());
  const double k2 = 3.0e-4 * std::exp(-80e3 / kGasConstant * (1 / T - 1 / 550.0));
  CHECK(v2.k == Approx(k2).epsilon(1e-14));
  CHECK(v2.rate() == Approx(k2 * std::pow(d[2], 1.3)).epsilon(1e-13));
  CHECK(g[2] == Approx(1.3 * std::pow(d[2], 0.3)).epsilon(1e-13));
  CHECK(v2.c_rev == 0.0);
  // R3: 2 A <=> D, orders 2 and 0.7; value = d_A^2 d_D^0.7 - c_rev d_A^0 d_D^1.7.
  const auto v3 = m.evaluate(2, T, d.data(), g.data());
  const double value3 = d[0] * d[0] * std::pow(d[3], 0.7) - v3.c_rev * std::pow(d[3], 1.7);
  CHECK(v3.value == Approx(value3).epsilon(1e-13));
  for (int i : {0, 3}) {
    std::vector<double> up = d, down = d;
    const double h = 1e-6 * d[i];
    up[i] += h;
    down[i] -= h;
    const double fd =
        (m.evaluate(2, T, up.data()).value - m.evaluate(2, T, down.data()).value) / (2 * h);
    INFO("species " << i);
    CHECK(g[i] == Approx(fd).epsilon(1e-7));
  }
  // The reverse coefficient's temperature derivative, by central differences.
  const double hT = 1e-4;
  const double fd_T =
      (m.evaluate(2, T + hT, d.data()).c_rev - m.evaluate(2, T - hT, d.data()).c_rev) / (2 * hT);
  CHECK(v3.dc_rev_dT == Approx(fd_T).epsilon(1e-6));
}

namespace {

AdsorptionTerm ads_term(double K, double dH, std::optional<double> T_ref,
                        std::vector<double> powers) {
  AdsorptionTerm t;
  t.K = K;
  t.dH = dH;
  t.T_ref = T_ref;
  t.powers = std::move(powers);
  return t;
}

// Invented LHHW mechanism (no source: numbers chosen so that every term of
// every denominator matters) over A, B, C, D, I:
//   R1: A + B <=> C   reversible, van 't Hoff K, orders 1 / 1, driving as
//       given; DEN^2 with a term on A (T_ref), a dissociative term B^0.5
//       (no T_ref) and a product term on C
//   R2: C => D        irreversible, order 1; DEN^1.5 over a two-species
//       term A*C and a term on the inert-to-R2 species B
// The K values are scaled to the driving quantity so K d is of order 1.
Mechanism make_lhhw_mechanism(Phase phase, Driving driving) {
  std::vector<Species> sp{
      make_species("A", 35.0, -50e3, 200.0, 0.030, 800.0),
      make_species("B", 29.0, 0.0, 130.0, 0.002, 70.0),
      make_species("C", 60.0, -90e3, 260.0, 0.032, 790.0),
      make_species("D", 75.0, -120e3, 300.0, 0.060, 900.0),
      make_species("I", 29.1, 0.0, 191.6, 0.028, 808.0),
  };
  // Typical driving quantity: ~3e5 Pa partial pressure, ~100 mol/m3 gas,
  // ~5000 mol/m3 liquid.
  const double d0 = driving == Driving::Pressure ? 3e5 : phase == Phase::Gas ? 100.0 : 5000.0;
  Reaction r1 = make_reaction("R1", {-1, -1, 1, 0, 0}, {1.0, 1.0, 0, 0, 0}, true);
  r1.rate.driving = driving;
  r1.rate.A = 2.0e3;
  r1.rate.Ea = 45e3;
  r1.equilibrium.kind = EquilibriumSource::Kind::VantHoff;
  r1.equilibrium.K_ref = 25.0;
  r1.equilibrium.T_ref = 500.0;
  r1.equilibrium.dH = -40e3;
  r1.dH_298 = -40e3;
  Adsorption a1;
  a1.exponent = 2;
  a1.terms = {ads_term(1.5 / d0, -30e3, 550.0, {1, 0, 0, 0, 0}),
              ads_term(0.8 / std::sqrt(d0), -12e3, std::nullopt, {0, 0.5, 0, 0, 0}),
              ads_term(2.0 / d0, 0.0, std::nullopt, {0, 0, 1, 0, 0})};
  r1.rate.adsorption = a1;

  Reaction r2 = make_reaction("R2", {0, 0, -1, 1, 0}, {0, 0, 1.0, 0, 0}, false);
  r2.rate.driving = driving;
  r2.rate.basis = RateBasis::Catalyst;
  r2.rate.A = 3.0e-4;
  r2.rate.Ea = 80e3;
  r2.rate.T_ref = 550.0;
  r2.dH_298 = -30e3;
  Adsorption a2;
  a2.exponent = 1.5;
  a2.terms = {ads_term(0.7 / (d0 * d0), -20e3, 600.0, {1, 0, 1, 0, 0}),
              ads_term(0.3 / d0, 15e3, 600.0, {0, 1, 0, 0, 0})};
  r2.rate.adsorption = a2;
  return Mechanism(phase, sp, {r1, r2});
}

}  // namespace

// The adsorption-inhibited law of kinetics.hpp, written out by hand:
// r = k(T) prod d^o (1 - Q/K) / (1 + sum_j K_j(T) prod d^m)^n.
TEST_CASE("adsorption terms divide the rate by the documented denominator", "[mechanism]") {
  const Mechanism m = make_lhhw_mechanism(Phase::Gas, Driving::Pressure);
  const double T = 520, P = 12e5;
  const std::vector<double> F{1.0, 2.0, 0.3, 0.1, 0.5};
  double Ft = 0;
  for (double f : F) Ft += f;
  auto p = [&](int i) { return F[i] / Ft * P; };
  auto a = [&](int i) { return p(i) / kStandardPressure; };
  const double d0 = 3e5;
  auto K_of = [&](double K, double dH, double T_ref) {
    return K * std::exp(-dH / kGasConstant * (1 / T - 1 / T_ref));
  };
  std::vector<double> r(2);
  m.rates(T, P, F.data(), r.data());
  const double k1 = 2.0e3 * std::exp(-45e3 / (kGasConstant * T));
  const double K1 = 25.0 * std::exp(40e3 / kGasConstant * (1 / T - 1 / 500.0));
  const double den1 = 1 + K_of(1.5 / d0, -30e3, 550.0) * p(0) +
                      0.8 / std::sqrt(d0) * std::exp(12e3 / (kGasConstant * T)) * std::sqrt(p(1)) +
                      2.0 / d0 * p(2);
  CHECK(r[0] ==
        Approx(k1 * p(0) * p(1) * (1 - a(2) / (a(0) * a(1)) / K1) / (den1 * den1)).epsilon(1e-12));
  const double k2 = 3.0e-4 * std::exp(-80e3 / kGasConstant * (1 / T - 1 / 550.0));
  const double den2 =
      1 + K_of(0.7 / (d0 * d0), -20e3, 600.0) * p(0) * p(2) + K_of(0.3 / d0, 15e3, 600.0) * p(1);
  CHECK(r[1] == Approx(k2 * p(2) / std::pow(den2, 1.5)).epsilon(1e-12));
}

// Random states (fixed seed) in flows, T and P; the same central-difference
// check as the power laws above, for every driving force and phase.
TEST_CASE("analytic Jacobian of adsorption-inhibited rates matches central differences",
          "[mechanism]") {
  std::mt19937 gen(20261204);
  std::uniform_real_distribution<double> logF(std::log(1e-3), std::log(5.0));
  std::uniform_real_distribution<double> Ts(400.0, 800.0);
  std::uniform_real_distribution<double> logP(std::log(1e5), std::log(40e5));
  struct Variant {
    Phase phase;
    Driving driving;
  };
  for (const Variant v :
       {Variant{Phase::Gas, Driving::Pressure}, Variant{Phase::Gas, Driving::Concentration},
        Variant{Phase::Liquid, Driving::Concentration}}) {
    const Mechanism m = make_lhhw_mechanism(v.phase, v.driving);
    for (int trial = 0; trial < 25; ++trial) {
      State s{Ts(gen), std::exp(logP(gen)), {}};
      for (int i = 0; i < 5; ++i) s.F.push_back(std::exp(logF(gen)));
      INFO("trial " << trial << " phase " << static_cast<int>(v.phase) << " driving "
                    << static_cast<int>(v.driving));
      check_jacobian(m, s);
    }
  }
}

// The sparse form (direct + dilution) holds the same numbers as the dense
// Jacobian, adsorption-only species included among the direct entries.
TEST_CASE("sparse rate Jacobian with adsorption terms equals the dense one", "[mechanism]") {
  const Mechanism m = make_lhhw_mechanism(Phase::Gas, Driving::Pressure);
  const double T = 610, P = 8e5;
  const std::vector<double> F{0.7, 1.3, 0.4, 0.2, 0.9};
  Eigen::MatrixXd J(2, 5);
  Eigen::VectorXd JT(2);
  std::vector<double> r(2), rs(2), direct(m.n_direct()), dilution(2), dT(2);
  m.rates_and_jacobian(T, P, F.data(), r.data(), J, JT);
  Mechanism::Scratch scratch;
  m.rates_and_sparse_jacobian(T, P, F.data(), rs.data(), direct.data(), dilution.data(), dT.data(),
                              scratch);
  // R2 (C => D) reads A and B through its denominator only.
  const auto& ks = m.rate_species(1);
  CHECK(std::find(ks.begin(), ks.end(), 0) != ks.end());
  CHECK(std::find(ks.begin(), ks.end(), 1) != ks.end());
  for (int j = 0; j < 2; ++j) {
    CHECK(rs[j] == r[j]);
    CHECK(dT[j] == JT(j));
    for (int k = 0; k < 5; ++k) {
      double sparse = dilution[j] * m.dilution_weight(k, F.data());
      const auto& sp = m.rate_species(j);
      for (std::size_t p = 0; p < sp.size(); ++p)
        if (sp[p] == k) sparse += direct[m.direct_offset(j) + p];
      CHECK(sparse == Approx(J(j, k)).epsilon(1e-14));
    }
  }
}
