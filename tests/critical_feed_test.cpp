// The runaway critical feed temperature of an adiabatic bed
// (analysis/runaway.hpp: `rxtrain stability --param feed.T` on a tubular
// stage) against the test's own scan: the bed integrated by GSL per feed
// temperature, S by central differences, its largest on a grid refined by
// GSL's Brent minimizer (the criterion of Morbidelli and Varma 1982: the
// critical value is where the normalized sensitivity peaks).
#include <fmt/format.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/analysis/stability.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"

namespace {

// A liquid first-order M => I in a solvent S, adiabatic, invented data;
// cp_M = cp_I constant (dH does not vary with T), equal molar volumes of M
// and I (the volumetric flow q stays constant).
constexpr double kFM = 8, kC = 8 * 180 + 40 * 75;         // mol/s, W/K
constexpr double kQ = 8 * 0.1 / 900 + 40 * 0.018 / 1000;  // m3/s
constexpr double kDTad = 60e3 * kFM / kC;                 // K
constexpr double kA = 0.01, kEa = 120e3, kTref = 350, kR = 8.314462618;
constexpr double kV = 0.1;  // m3

const char* kBed = R"(title: adiabatic first-order bed (invented data)
phase: liquid
species:
  - {id: M, mw: 0.1 kg/mol, density: 900 kg/m3, thermo: {cp: 180 J/mol/K}}
  - {id: I, mw: 0.1 kg/mol, density: 900 kg/m3, thermo: {cp: 180 J/mol/K}}
  - {id: S, mw: 0.018 kg/mol, density: 1000 kg/m3, thermo: {cp: 75 J/mol/K}}
reactions:
  - id: isom
    equation: M => I
    rate: {A: 0.01 1/s, Ea: 120 kJ/mol, T_ref: 350 K, orders: {M: 1}}
    dH: -60 kJ/mol
feed: {T: 330 K, P: 3 bar, flows: {M: 8 mol/s, S: 40 mol/s}}
key: M
train:
  - {type: pfr, id: R1, volume: 0.1 m3}
)";

// The bed's outlet (its peak: adiabatic and exothermic) for feed T0: with
// X = 1 - exp(-u), du/dV = k(T) / q, T = T0 + dT_ad X (GSL rk8pd, 1e-13).
double gsl_T_out(double T0) {
  rxtrain::test::GslNoAbort quiet;
  rxtrain::test::GslOde ode(
      1,
      [&](const double* y, double* dy) {
        const double T = T0 + kDTad * -std::expm1(-y[0]);
        dy[0] = kA * std::exp(-kEa / kR * (1 / T - 1 / kTref)) / kQ;
      },
      1e-13, 1e-13);
  std::vector<double> y{0.0};
  ode.advance(0, kV, y);
  return T0 + kDTad * -std::expm1(-y[0]);
}

// S = (T0 / T_peak) dT_peak/dT0, a central difference of 1e-3 K.
double gsl_S(double T0) {
  const double h = 1e-3;
  return T0 / gsl_T_out(T0) * (gsl_T_out(T0 + h) - gsl_T_out(T0 - h)) / (2 * h);
}

}  // namespace

TEST_CASE("an adiabatic bed's critical feed temperature equals an independent scan's",
          "[runaway]") {
  // The scan: S on a 0.25 K grid over 320-345 K, the largest refined by
  // GSL's Brent minimizer of -S between its neighbours (to 1e-6 K).
  double best = 320, S_best = 0;
  for (double T0 = 320; T0 <= 345; T0 += 0.25)
    if (const double s = gsl_S(T0); s > S_best) {
      best = T0;
      S_best = s;
    }
  const double T0_crit = rxtrain::test::gsl_maximize([](double T0) { return gsl_S(T0); }, best,
                                                     best - 0.25, best + 0.25, 1e-6);

  const rxtrain::UnitParser units;
  const auto c = rxtrain::load_case_from_string(kBed, "bed.yaml", units);
  rxtrain::CaseField feed_T;
  for (const auto& f : rxtrain::case_fields(c))
    if (f.name == "feed.T") feed_T = f;
  rxtrain::StabilityOptions o;
  o.lo = 320;
  o.hi = 345;
  const auto r = rxtrain::run_stability(c, feed_T, o);
  REQUIRE(r.tubular);
  REQUIRE(r.critical);
  INFO(fmt::format("critical feed T {:.9f} K against the scan's {:.9f} K; S {:.6g} against {:.6g}",
                   r.critical->value, T0_crit, r.critical->S, gsl_S(T0_crit)));
  CHECK(std::abs(r.critical->value - T0_crit) < 1e-3);
  // S is about 1500 there: at a peak this sharp the two central
  // differences, of different steps, part by a few tenths of a percent.
  CHECK(std::abs(r.critical->S - gsl_S(T0_crit)) < 1e-2 * gsl_S(T0_crit));
  // The case's 330 K stands below it: a positive margin.
  CHECK(r.critical->margin == Approx(T0_crit - 330).margin(1e-3));
}
