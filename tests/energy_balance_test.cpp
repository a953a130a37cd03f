// The energy balance's mixing of two streams (a cold shot joining a bed's
// outlet) against the closed form for heat capacities linear in T, worked
// by hand below. All data are invented for the test.
#include "rxtrain/models/energy_balance.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <optional>
#include <vector>

#include "rxtrain/chem/thermo.hpp"

using namespace rxtrain;

namespace {

Species linear_cp(const std::string& id, double a, double b) {
  Species s;
  s.id = id;
  s.name = id;
  s.thermo = ThermoModel(CpPolynomial{{a, b, 0, 0}, std::nullopt}, 0.0, 200.0);
  return s;
}

}  // namespace

TEST_CASE("adiabatic mixing with temperature-dependent cp matches the hand calculation",
          "[energy_balance]") {
  // cp_i = a_i + b_i T, so h_i(T) - h_i(T0) = a_i (T - T0) + b_i / 2 (T^2 - T0^2)
  // with T0 = 298.15 K. The mixture's T solves
  //   (sum F b / 2) T^2 + (sum F a) T - [H + sum F (a T0 + b T0^2 / 2)] = 0,
  // H the two streams' sensible enthalpy flows added (derived here).
  const std::vector<double> a{20, 28, 30}, b{0.05, 0.004, 0.01};
  Reaction r;
  r.id = "R";
  r.equation = "A => B";
  r.nu = {-1, 1, 0};
  r.rate.orders = {1, 0, 0};
  r.rate.A = 1;
  r.rate.Ea = 0;
  r.dH_298 = -1e4;
  const Mechanism mech(
      Phase::Gas,
      {linear_cp("A", a[0], b[0]), linear_cp("B", a[1], b[1]), linear_cp("I", a[2], b[2])}, {r});
  const Stream main{700, 30e5, {5, 2, 40}};
  const Stream side{420, 35e5, {3, 0, 10}};
  const double T0 = kReferenceT;
  auto hs = [&](int i, double T) { return a[i] * (T - T0) + b[i] / 2 * (T * T - T0 * T0); };
  double H = 0, qa = 0, qb = 0, qc = 0;
  for (int i = 0; i < 3; ++i) {
    H += main.F[i] * hs(i, main.T) + side.F[i] * hs(i, side.T);
    const double F = main.F[i] + side.F[i];
    qa += F * b[i] / 2;
    qb += F * a[i];
    qc += F * (a[i] * T0 + b[i] / 2 * T0 * T0);
  }
  const double c = -(H + qc);
  const double T_hand = 2 * -c / (qb + std::sqrt(qb * qb - 4 * qa * c));  // the positive root
  const Stream m = mix_adiabatic(mech, main, side);
  CHECK(m.T == Approx(T_hand).epsilon(1e-10));
  CHECK(m.P == main.P);
  for (int i = 0; i < 3; ++i) CHECK(m.F[i] == main.F[i] + side.F[i]);
  // Between the two, nearer the larger heat-capacity flow.
  CHECK(m.T < main.T);
  CHECK(m.T > side.T);
}
