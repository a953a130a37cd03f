// Stability of a stirred tank's steady states (models/tank_stability.hpp):
// the first-order adiabatic tank against van Heerden's heat-generation and
// heat-removal construction, a cooled tank in the oscillatory region of
// Uppal, Ray and Poore, and every eigenvalue against GSL's
// gsl_eigen_nonsymm on the classical two-state model (plus the total-holdup
// mode) written here. Mechanisms are invented (tests/first_order_tank.hpp).
#include "rxtrain/models/tank_stability.hpp"

#include <gsl/gsl_complex_math.h>
#include <gsl/gsl_eigen.h>
#include <gsl/gsl_matrix.h>
#include <gsl/gsl_vector.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <complex>
#include <vector>

#include "first_order_tank.hpp"
#include "rxtrain/models/tank_balances.hpp"
#include "rxtrain/stages/cstr.hpp"

namespace {

using rxtrain::StabilityKind;
using rxtrain::StageResult;
using rxtrain::Stream;
using rxtrain::SunContext;
using rxtrain::test::FirstOrderTank;
using Eig = std::vector<std::complex<double>>;

// The classical model of the tank on [N_A, N_B, T] (constant density:
// concentrations N_i / V, outflow N_i / tau), linearized at the steady
// state T (X from the mole balance): the textbook Jacobian of the
// first-order CSTR (e.g. Uppal, Ray and Poore, Chem. Eng. Sci. 29 (1974)
// 967, in dimensional form), with the vessel's heat capacity C_v.
std::vector<double> classical_jacobian(const FirstOrderTank& t, double T, double tau, double C_v) {
  const double k = t.k(T), dk = k * t.ER / (T * T);
  const double X = t.X(T, tau);
  const double NA = t.F0 * tau * (1 - X);
  const double Ch = t.F0 * tau * t.cp + C_v;
  const double q = -t.dH;
  return {-1 / tau - k,
          0,
          -NA * dk,  //
          k,
          -1 / tau,
          NA * dk,  //
          q * k / Ch,
          0,
          (-t.F0 * t.cp + q * NA * dk - t.UA) / Ch};
}

// GSL's eigenvalues of a 3 x 3 row-major matrix, sorted as rxtrain sorts.
Eig gsl_eigenvalues(std::vector<double> a) {
  const std::size_t n = 3;
  gsl_matrix_view m = gsl_matrix_view_array(a.data(), n, n);
  gsl_vector_complex* ev = gsl_vector_complex_alloc(n);
  gsl_eigen_nonsymm_workspace* w = gsl_eigen_nonsymm_alloc(n);
  const int status = gsl_eigen_nonsymm(&m.matrix, ev, w);
  Eig out;
  for (std::size_t i = 0; i < n; ++i) {
    const gsl_complex z = gsl_vector_complex_get(ev, i);
    out.emplace_back(GSL_REAL(z), GSL_IMAG(z));
  }
  gsl_eigen_nonsymm_free(w);
  gsl_vector_complex_free(ev);
  REQUIRE(status == GSL_SUCCESS);
  std::sort(out.begin(), out.end(), [](const auto& x, const auto& y) {
    return x.real() != y.real() ? x.real() > y.real() : x.imag() > y.imag();
  });
  return out;
}

void check_same_spectrum(const Eig& got, const Eig& ref) {
  REQUIRE(got.size() == ref.size());
  double scale = 0;
  for (const auto& e : ref) scale = std::max(scale, std::abs(e));
  for (std::size_t i = 0; i < ref.size(); ++i) {
    INFO("eigenvalue " << i << ": " << got[i] << " vs GSL " << ref[i]);
    CHECK(std::abs(got[i] - ref[i]) <= 1e-8 * scale);
  }
}

StageResult run(const FirstOrderTank& t, double tau, double T0, double C_v = 0) {
  SunContext ctx;
  const Stream in{T0, 2e5, {t.F0, 0.0}};
  return rxtrain::run_cstr(t.mechanism(), t.spec(tau, C_v), in, {0, t.F0}, ctx);
}

}  // namespace

TEST_CASE("adiabatic first-order tank: three steady states, the middle a saddle, the outer stable",
          "[stability]") {
  const FirstOrderTank t;
  const double tau = 1.0, T0 = 300.0;
  // The intersections of heat generation and removal (van Heerden 1953).
  const auto ref = rxtrain::test::gsl_roots([&](double T) { return t.residual(T, T0, tau); }, T0,
                                            T0 + t.J() + 1, 0.01);
  REQUIRE(ref.size() == 3);
  const StageResult r = run(t, tau, T0);
  REQUIRE(r.steady_states.size() == 3);
  const StabilityKind expected[] = {StabilityKind::Stable, StabilityKind::Saddle,
                                    StabilityKind::Stable};
  for (std::size_t i = 0; i < 3; ++i) {
    const auto& s = r.steady_states[i];
    CHECK(std::abs(s.T - ref[i]) / ref[i] < 1e-9);
    REQUIRE(s.eigenvalues.size() == 3);  // n_species + 1
    CHECK(s.kind == expected[i]);
    CHECK(s.stable() == (i != 1));
    check_same_spectrum(s.eigenvalues, gsl_eigenvalues(classical_jacobian(t, s.T, tau, 0)));
  }
}

TEST_CASE("at the turning points the slope condition holds and one eigenvalue is zero",
          "[stability]") {
  // Where heat removal is tangent to heat generation (the slope
  // condition, van Heerden 1953), the saddle and a stable state merge:
  // the linearized balances are singular there.
  const FirstOrderTank t;
  const double tau = 1.0;
  const auto tp = rxtrain::test::closed_form_turning_points(t, tau);
  REQUIRE(tp.size() == 2);
  const rxtrain::Mechanism mech = t.mechanism();
  rxtrain::detail::CstrBalances b;
  const std::vector<double> beta{1.0};
  for (const auto& p : tp) {
    const double X = t.X(p.T, tau);
    const std::vector<double> F{t.F0 * (1 - X), t.F0 * X};
    b.reset(mech, beta, rxtrain::HeatMode::Adiabatic, Stream{p.T0, 2e5, {t.F0, 0.0}});
    const auto st = rxtrain::tank_stability(b, F.data(), p.T, tau * t.F0 * t.v, 0.0);
    double smallest = 1e300, largest = 0;
    for (const auto& e : st.eigenvalues) {
      smallest = std::min(smallest, std::abs(e));
      largest = std::max(largest, std::abs(e));
    }
    CHECK(smallest < 1e-9 * largest);
    // Just past the turning point the tank has one state, just inside three.
    const double lower = tp[0].T0 < tp[1].T0 ? tp[0].T0 : tp[1].T0;
    const double upper = tp[0].T0 < tp[1].T0 ? tp[1].T0 : tp[0].T0;
    const bool is_upper = p.T0 == upper;
    CHECK(run(t, tau, is_upper ? upper - 0.5 : lower + 0.5).steady_states.size() == 3);
    CHECK(run(t, tau, is_upper ? upper + 0.5 : lower - 0.5).steady_states.size() == 1);
  }
}

TEST_CASE("a cooled tank in the oscillatory region has an unstable complex pair", "[stability]") {
  // Dimensionless parameters B = 14, beta = 3, Da = 0.25, gamma = 20, x2c =
  // 0 lie in the region where Uppal, Ray and Poore (Chem. Eng. Sci. 29
  // (1974) 967) find a unique unstable steady state surrounded by a limit
  // cycle (the values are from memory of their figures; the GSL check
  // below stands on its own). In SI: T0 = T_c = 300 K, Ea/R = gamma T0 =
  // 6000 K, -dH = B cp T0 / gamma = 31.5 kJ/mol, UA = beta F0 cp = 4.5
  // kW/K, k(T0) = Da / tau = 0.0025 1/s at tau = 100 s.
  FirstOrderTank t;
  t.ER = 6000.0;
  t.T_ref = 300.0;
  t.k_ref = 0.0025;
  t.dH = -31500.0;
  t.UA = 4500.0;
  t.T_c = 300.0;
  const double tau = 100.0;
  const auto ref = rxtrain::test::gsl_roots([&](double T) { return t.residual(T, 300.0, tau); },
                                            300.0, 600.0, 0.01);
  REQUIRE(ref.size() == 1);
  const StageResult r = run(t, tau, 300.0);
  REQUIRE(r.steady_states.size() == 1);
  const auto& s = r.steady_states.front();
  CHECK(std::abs(s.T - ref.front()) / ref.front() < 1e-9);
  CHECK(s.kind == StabilityKind::Oscillatory);
  CHECK_FALSE(s.stable());
  const Eig g = gsl_eigenvalues(classical_jacobian(t, s.T, tau, 0));
  REQUIRE(g[0].imag() > 0);
  REQUIRE(g[0].real() > 0);  // GSL agrees the pair is unstable
  check_same_spectrum(s.eigenvalues, g);
  // The wall's heat is the duty: -UA (T - T_c).
  CHECK(r.duty == Approx(-t.UA * (s.T - t.T_c)).epsilon(1e-12));
  CHECK(r.cooling.has_value());

  SECTION("the vessel's heat capacity moves the eigenvalues, as the classical model says") {
    const StageResult rc = run(t, tau, 300.0, 2.5e6);
    REQUIRE(rc.steady_states.size() == 1);
    check_same_spectrum(rc.steady_states.front().eigenvalues,
                        gsl_eigenvalues(classical_jacobian(t, s.T, tau, 2.5e6)));
  }
}

TEST_CASE("an adiabatic first-order tank cannot oscillate whatever its heat capacity",
          "[stability]") {
  // The two-state model's discriminant is (a - (c + 1) L)^2 + 4 c L (1 - L)
  // with L = 1 / Lewis number in (0, 1] and c >= 0 for an exothermic
  // reaction (docs/stability.md): never negative, so every eigenvalue is
  // real. Checked over heat capacities from none to a thousand times the
  // contents', at space times across the S-curve.
  const FirstOrderTank t;
  for (double tau : {0.2, 1.0, 3.0, 20.0})
    for (double C_v : {0.0, 1e2, 1e4, 1e6, 1e8}) {
      const StageResult r = run(t, tau, 300.0, C_v);
      const auto ref = rxtrain::test::gsl_roots([&](double T) { return t.residual(T, 300.0, tau); },
                                                300.0, 300.0 + t.J() + 1, 0.01);
      CHECK(r.steady_states.size() == ref.size());
      for (const auto& s : r.steady_states) {
        REQUIRE(s.eigenvalues.size() == 3);
        for (const auto& e : s.eigenvalues) CHECK(e.imag() == 0);
        CHECK(s.kind != StabilityKind::Oscillatory);
        check_same_spectrum(s.eigenvalues, gsl_eigenvalues(classical_jacobian(t, s.T, tau, C_v)));
      }
    }
}

TEST_CASE("the kind of a spectrum follows the signs of its real parts", "[stability]") {
  using C = std::complex<double>;
  const auto kind = [](Eig e) { return rxtrain::classify_eigenvalues(e); };
  CHECK(kind({C(-1, 0), C(-2, 0)}) == StabilityKind::Stable);
  CHECK(kind({C(-1, 3), C(-1, -3)}) == StabilityKind::Stable);
  CHECK(kind({C(0.5, 0), C(-2, 0)}) == StabilityKind::Saddle);
  CHECK(kind({C(0.5, 0), C(0.1, 0), C(-2, 0)}) == StabilityKind::Unstable);
  CHECK(kind({C(0.5, 2), C(0.5, -2), C(-2, 0)}) == StabilityKind::Oscillatory);
  CHECK(kind({C(1, 0), C(-0.5, 2), C(-0.5, -2)}) == StabilityKind::Saddle);
  CHECK(kind({C(0, 0), C(-1, 0)}) == StabilityKind::Saddle);  // on the edge: not stable
}

namespace {

// The dynamic balances of docs/stability.md written out for A -> 2 B
// (first order in A's concentration, per volume, constant cp, cooled, with
// a vessel heat capacity), by the outflow rule of each phase; the test
// differentiates them numerically and compares with the analytic
// linearization of the core.
struct TwoSpeciesTank {
  bool gas = true;
  double P = 5e5, V = 0.5, UA = 800, Tc = 330, Cv = 4e4;
  double k0 = 2e3, ER = 6000;  // k = k0 exp(-ER / T), 1/s
  double cpA = 40, cpB = 30, dH298 = -40000;
  double vA = 1e-4, vB = 0.7e-4;  // liquid molar volumes, m3/mol
  Stream in{320.0, 5e5, {5.0, 1.0}};

  rxtrain::Mechanism mechanism() const {
    auto sp = [&](const char* id, double cp, double v) {
      rxtrain::Species s;
      s.id = id;
      s.name = id;
      s.mw = 0.05;
      s.density = 0.05 / v;
      s.thermo = rxtrain::ThermoModel(rxtrain::CpConstant{cp}, std::nullopt, std::nullopt);
      return s;
    };
    rxtrain::Reaction r;
    r.id = "r1";
    r.equation = "A => 2 B";
    r.nu = {-1, 2};
    r.rate.A = k0;
    r.rate.Ea = ER * rxtrain::kGasConstant;
    r.rate.orders = {1, 0};
    r.dH_298 = dH298;
    return rxtrain::Mechanism(gas ? rxtrain::Phase::Gas : rxtrain::Phase::Liquid,
                              {sp("A", cpA, vA), sp("B", cpB, vB)}, {r});
  }
  double h(double cp, double T) const { return cp * (T - 298.15); }
  // d[N_A, N_B, T]/dt.
  std::vector<double> rhs(const std::vector<double>& x) const {
    const double NA = x[0], NB = x[1], T = x[2];
    const double R = rxtrain::kGasConstant;
    const double CA = gas ? NA / (NA + NB) * P / (R * T) : NA / (vA * NA + vB * NB);
    const double r = k0 * std::exp(-ER / T) * CA;
    const double dH = dH298 + (2 * cpB - cpA) * (T - 298.15);
    const double Ch = NA * cpA + NB * cpB + Cv;
    const double Tdot = (in.F[0] * (h(cpA, in.T) - h(cpA, T)) +
                         in.F[1] * (h(cpB, in.T) - h(cpB, T)) - V * r * dH - UA * (T - Tc)) /
                        Ch;
    double FA, FB;
    if (gas) {
      const double Nstar = P * V / (R * T);
      const double Ft = in.F[0] + in.F[1] + V * r + Nstar / T * Tdot;
      FA = NA * Ft / Nstar;
      FB = NB * Ft / Nstar;
    } else {
      const double q = vA * in.F[0] + vB * in.F[1] + V * (2 * vB - vA) * r;
      FA = NA * q / V;
      FB = NB * q / V;
    }
    return {in.F[0] - FA - V * r, in.F[1] - FB + 2 * V * r, Tdot};
  }
};

}  // namespace

TEST_CASE("the linearized balances of gas and liquid tanks match their outflow rules",
          "[stability]") {
  for (const bool gas : {true, false}) {
    DYNAMIC_SECTION((gas ? "gas" : "liquid")) {
      TwoSpeciesTank t;
      t.gas = gas;
      const rxtrain::Mechanism mech = t.mechanism();
      rxtrain::ReactorSpec spec;
      spec.id = "R1";
      spec.type = rxtrain::ReactorType::Cstr;
      spec.volume = t.V;
      spec.tank_cooling = rxtrain::TankCooling{t.UA, t.Tc};
      spec.heat_capacity = t.Cv;
      spec.where = {"case.yaml", 1, 1};
      SunContext ctx;
      const StageResult r = rxtrain::run_cstr(mech, spec, t.in, {0, t.in.F[0]}, ctx);
      REQUIRE_FALSE(r.steady_states.empty());
      for (const auto& s : r.steady_states) {
        // The holdups at the steady state: N_i = F_i V / q_out.
        const double q = mech.volumetric_flow(s.T, t.P, s.F.data());
        const std::vector<double> x{s.F[0] * t.V / q, s.F[1] * t.V / q, s.T};
        // A steady state of the written-out balances too.
        const auto f0 = t.rhs(x);
        CHECK(std::abs(f0[0]) < 1e-7 * t.in.F[0]);
        CHECK(std::abs(f0[2]) < 1e-7 * s.T);
        rxtrain::detail::CstrBalances b;
        b.reset(mech, {1.0}, rxtrain::HeatMode::Adiabatic, t.in, spec.tank_cooling);
        Eigen::MatrixXd J;
        b.dynamic_jacobian(s.F.data(), s.T, t.V, t.Cv, J);
        REQUIRE(J.rows() == 3);
        // Central differences of the written-out balances.
        for (int c = 0; c < 3; ++c) {
          const double hstep = 1e-6 * x[c];
          auto xp = x, xm = x;
          xp[c] += hstep;
          xm[c] -= hstep;
          const auto fp = t.rhs(xp), fm = t.rhs(xm);
          for (int row = 0; row < 3; ++row) {
            const double fd = (fp[row] - fm[row]) / (2 * hstep);
            INFO("row " << row << " column " << c << ": analytic " << J(row, c) << ", numeric "
                        << fd);
            CHECK(std::abs(J(row, c) - fd) <=
                  1e-6 * (std::abs(fd) + J.row(row).cwiseAbs().maxCoeff()));
          }
        }
        // The flushing mode: -q_out / V is an eigenvalue.
        bool flushing = false;
        for (const auto& e : s.eigenvalues)
          flushing = flushing || std::abs(e - std::complex<double>(-q / t.V, 0)) < 1e-8 * q / t.V;
        CHECK(flushing);
      }
    }
  }
}
