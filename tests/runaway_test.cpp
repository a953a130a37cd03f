// The runaway margin of a tubular bed (analysis/runaway.hpp, through
// `rxtrain stability`'s run_stability): the normalized sensitivity of the
// peak temperature S = (T_c / T_peak) dT_peak/dT_c against central
// differences of independent runs, and the critical coolant temperature
// (where S peaks: Morbidelli and Varma, AIChE J. 28 (1982) 705, the
// reference from memory) of a cooled first-order bed against an
// independent scan written here: the bed's balances integrated by GSL's
// rk8pd for each coolant temperature,
// the peak located on the integration by GSL's Brent root of dT/dV, S by
// central differences and its peak by GSL's Brent minimizer. All kinetic
// and physical data are invented for the tests.
#include "rxtrain/analysis/runaway.hpp"

#include <fmt/format.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <iomanip>
#include <memory>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/analysis/stability.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/flowsheet/train.hpp"

namespace {

using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;

// A => B over catalyst in 2500 tubes of 25 mm, first order in A's partial
// pressure, a constant coolant temperature; every cp constant and cp_A =
// cp_B (dH does not vary with T), no pressure drop (no pellet).
struct CooledBed {
  static constexpr double F = 85.0, yA = 0.06;  // mol/s, feed
  static constexpr double P = 1.5e5;            // Pa
  static constexpr double T_feed = 663.15;      // K
  static constexpr double k_ref = 0.004e-5;     // mol/(kg s Pa) at T_ref
  static constexpr double T_ref = 623.15, Ea = 140e3, dH = -180e3;
  static constexpr double cpA = 80, cpB = 80, cpN = 30;  // J/(mol K)
  static constexpr double rho_b = 1200, U = 200, d = 0.025;
  static constexpr double tubes = 2500, length = 3.0;
  static double volume() { return tubes * M_PI / 4 * d * d * length; }
};

std::string bed_case(double T_coolant, const std::string& heat_extra = "") {
  return R"(title: cooled first-order bed (invented data)
phase: gas
species:
  - {id: A, thermo: {cp: 80 J/mol/K}}
  - {id: B, thermo: {cp: 80 J/mol/K}}
  - {id: N2, thermo: {cp: 30 J/mol/K}}
reactions:
  - id: r1
    equation: A => B
    rate: {per: catalyst, A: 0.004 mol/(kg*s*bar), Ea: 140 kJ/mol, T_ref: 623.15 K,
           driving: pressure, orders: {A: 1}}
    dH: -180 kJ/mol
feed: {T: 663.15 K, P: 1.5 bar, flow: 85 mol/s, composition: {A: 0.06, N2: 0.94}}
key: A
train:
  - type: pfr
    id: R1
    volume: )" +
         std::to_string(CooledBed::volume()) + R"( m3
    bulk_density: 1200 kg/m3
    tubes: {count: 2500, diameter: 25 mm, void_fraction: 0.4}
    heat: {U: 200 W/m2/K, coolant: {T: )" +
         fmt::format("{:.12g}", T_coolant) + " K}" + heat_extra + "}\n";
}

rxtrain::CaseField field_named(const rxtrain::Case& c, const std::string& name) {
  for (const auto& f : rxtrain::case_fields(c))
    if (f.name == name) return f;
  FAIL("no field " << name);
  return {};
}

// The bed's balances on y = [F_A, T] along the bed volume V (the steady
// plug-flow mole and energy balances of a cooled tube: dF_A/dV = -rho_b r,
// sum F cp dT/dV = (-dH) rho_b r - U (4/d) (T - T_c)).
void bed_rhs(double Tc, const double* y, double* dy) {
  using B = CooledBed;
  const double FA0 = B::yA * B::F, FA = y[0], T = y[1];
  const double pA = FA / B::F * B::P;  // A => B keeps the moles
  const double r =
      B::rho_b * B::k_ref * std::exp(-B::Ea / 8.314462618 * (1 / T - 1 / B::T_ref)) * pA;
  const double Cp = FA * B::cpA + (FA0 - FA) * B::cpB + (B::F - FA0) * B::cpN;
  dy[0] = -r;
  dy[1] = (r * -B::dH - B::U * 4 / B::d * (T - Tc)) / Cp;
}

// The bed's peak temperature at coolant temperature Tc: rk8pd over 400
// pieces of the bed; the largest sample's neighbours bracket dT/dV = 0,
// whose root (GSL Brent, the state at each trial integrated from the piece
// before) gives the peak.
double gsl_peak(double Tc) {
  GslNoAbort quiet;
  using B = CooledBed;
  GslOde ode(
      2, [Tc](const double* y, double* dy) { bed_rhs(Tc, y, dy); }, 1e-12, 1e-12);
  const int n = 400;
  const double V = B::volume();
  std::vector<std::vector<double>> ys;
  std::vector<double> y{B::yA * B::F, B::T_feed};
  ys.push_back(y);
  for (int k = 1; k <= n; ++k) {
    ode.advance(V * (k - 1) / n, V * k / n, y);
    ys.push_back(y);
  }
  int top = 0;
  for (int k = 1; k <= n; ++k)
    if (ys[k][1] > ys[top][1]) top = k;
  if (top == 0 || top == n) return ys[top][1];
  auto state_at = [&](double v) {
    std::vector<double> s = ys[top - 1];
    if (v > V * (top - 1) / n) ode.advance(V * (top - 1) / n, v, s);
    return s;
  };
  auto slope = [&](double v) {
    const std::vector<double> s = state_at(v);
    double dy[2];
    bed_rhs(Tc, s.data(), dy);
    return dy[1];
  };
  const double v_peak =
      rxtrain::test::gsl_brent(slope, V * (top - 1) / n, V * (top + 1) / n, 1e-12);
  return state_at(v_peak)[1];
}

double gsl_S(double Tc, double h = 0.02) {
  const double T = gsl_peak(Tc);
  return Tc / T * (gsl_peak(Tc + h) - gsl_peak(Tc - h)) / (2 * h);
}

// The test's own critical coolant temperature: the largest S on a 1 K grid
// over [lo, hi], then GSL's Brent minimizer of -S around it.
double gsl_critical(double lo, double hi) {
  GslNoAbort quiet;
  double best = lo, S_best = -1;
  for (double Tc = lo; Tc <= hi + 1e-9; Tc += 1.0) {
    const double S = gsl_S(Tc);
    if (S > S_best) {
      S_best = S;
      best = Tc;
    }
  }
  REQUIRE(best > lo);
  REQUIRE(best < hi);
  return rxtrain::test::gsl_maximize([](double Tc) { return gsl_S(Tc); }, best, best - 1, best + 1,
                                     1e-4);
}

rxtrain::StabilityResult scan(const rxtrain::Case& c, double lo, double hi, int points) {
  rxtrain::StabilityOptions o;
  o.lo = lo;
  o.hi = hi;
  o.sensitivity.points = points;
  return rxtrain::run_stability(c, field_named(c, "train.R1.heat.coolant.T"), o);
}

}  // namespace

TEST_CASE("a bed's normalized sensitivity equals central differences of independent runs",
          "[runaway]") {
  const rxtrain::UnitParser units;
  const double design = 663.15;
  const rxtrain::Case c = rxtrain::load_case_from_string(bed_case(design), "bed.yaml", units);
  const auto r = scan(c, 650, 680, 7);
  REQUIRE(r.tubular);
  REQUIRE(r.sensitivity.size() == 7);
  CHECK(r.branches.empty());
  for (const auto& p : r.sensitivity) {
    // Independent runs: the case file written at each coolant temperature
    // and run whole (hot spot from the train's result).
    auto peak = [&](double Tc) {
      const auto t =
          rxtrain::run_train(rxtrain::load_case_from_string(bed_case(Tc), "b.yaml", units));
      REQUIRE(t.stages[0].hot_spot);
      return t.stages[0].hot_spot->T;
    };
    const double h = 0.01;  // K
    const double T = peak(p.value);
    const double S_runs = p.value / T * (peak(p.value + h) - peak(p.value - h)) / (2 * h);
    CHECK(p.checked);
    CHECK(std::abs(p.T_peak - T) <= 1e-9 * T);
    // The scan's step (0.015 K, halved) and this 0.01 K differ in their
    // h^2 error and in the integration's noise (rtol 1e-8 of ~700 K over
    // 0.02 K: ~3e-4 in dT/dT_c): 1e-3 relative plus that.
    CHECK(std::abs(p.S - S_runs) <= 1e-3 * std::abs(S_runs) + 1e-3);
    // And against GSL's integration of the same bed written in this test.
    const double S_gsl = gsl_S(p.value);
    CHECK(std::abs(p.T_peak - gsl_peak(p.value)) <= 1e-5 * T);
    CHECK(std::abs(p.S - S_gsl) <= 1e-3 * std::abs(S_gsl) + 1e-3);
  }
}

TEST_CASE(
    "the critical coolant temperature of a cooled first-order bed matches an independent scan",
    "[runaway]") {
  const rxtrain::UnitParser units;
  const double design = 663.15;
  const rxtrain::Case c = rxtrain::load_case_from_string(bed_case(design), "bed.yaml", units);
  const double lo = 655, hi = 685;
  const auto r = scan(c, lo, hi, 31);
  REQUIRE(r.critical);
  const double reference = gsl_critical(lo, hi);
  INFO(std::setprecision(10) << "rxtrain " << r.critical->value << " K, GSL scan " << reference
                             << " K");
  // Both locate the maximum of S to about 1e-4 K (the minimizers'
  // tolerances; the central differences' h^2 error moves it by less:
  // measured 1e-5 K apart).
  CHECK(std::abs(r.critical->value - reference) <= 1e-3);
  CHECK(r.critical->S > 5);  // a sharp peak: the bed runs away past it
  CHECK(r.critical->pronounced);
  CHECK(std::abs(r.critical->margin - (r.critical->value - design)) <= 1e-12);
  CHECK(r.critical->beyond == (r.critical->value < design));
  // The S at the critical value is the largest of the scan's.
  for (const auto& p : r.sensitivity) CHECK(std::abs(p.S) <= std::abs(r.critical->S) * (1 + 1e-9));
}

TEST_CASE("run warns when a bed's critical coolant temperature lies within the margin",
          "[runaway]") {
  const rxtrain::UnitParser units;
  const rxtrain::Case probe = rxtrain::load_case_from_string(bed_case(663.15), "bed.yaml", units);
  const double critical = scan(probe, 655, 685, 31).critical.value().value;
  auto runaway_warnings_at = [&](double Tc, double margin) {
    const auto c = rxtrain::load_case_from_string(bed_case(Tc), "bed.yaml", units);
    const auto t = rxtrain::run_checked(c, {}, 0.0, margin);
    std::vector<std::string> found;
    for (const auto& w : t.warnings)
      if (w.find("runs away") != std::string::npos) found.push_back(w);
    return found;
  };
  // 3 K below the critical value with a 5 K margin: told, and not past it.
  const auto near = runaway_warnings_at(critical - 3, 5);
  REQUIRE(near.size() == 1);
  CHECK(near[0].find("stage R1") != std::string::npos);
  CHECK(near[0].find("sits within 5 K") != std::string::npos);
  // 2 K above it: told that it stands past it.
  const auto past = runaway_warnings_at(critical + 2, 5);
  REQUIRE(past.size() == 1);
  CHECK(past[0].find("stands past it") != std::string::npos);
  // 15 K below it with a 5 K margin, or with the check off: nothing.
  CHECK(runaway_warnings_at(critical - 15, 5).empty());
  CHECK(runaway_warnings_at(critical - 3, 0).empty());
}

TEST_CASE("stability refuses a tubular bed it cannot scan", "[runaway]") {
  const rxtrain::UnitParser units;
  const rxtrain::Case c = rxtrain::load_case_from_string(bed_case(663.15), "bed.yaml", units);
  rxtrain::StabilityOptions o;
  o.lo = 600;
  o.hi = 700;
  o.stage = "R9";
  CHECK_THROWS_AS(rxtrain::run_stability(c, field_named(c, "feed.T"), o), rxtrain::InputError);
  rxtrain::Case iso = c;
  auto& spec = std::get<rxtrain::ReactorSpec>(iso.train[0]);
  spec.cooling.reset();
  spec.geometry.reset();
  spec.heat = rxtrain::HeatMode::Isothermal;
  o.stage.clear();
  CHECK_THROWS_AS(rxtrain::run_stability(iso, field_named(iso, "feed.T"), o), rxtrain::InputError);
}
