// `rxtrain stability` (analysis/stability.hpp) and the continuation under
// it (solvers/continuation.hpp): the turning points of the first-order
// adiabatic tank against their closed form (van Heerden's slope
// condition, tests/first_order_tank.hpp), and a fold of a curve whose
// folds are known exactly.
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <string>

#include "first_order_tank.hpp"
#include "rxtrain/analysis/stability.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/solvers/continuation.hpp"
#include "s_curve_tank.hpp"

namespace {

rxtrain::CaseField field_named(const rxtrain::Case& c, const std::string& name) {
  for (const auto& f : rxtrain::case_fields(c))
    if (f.name == name) return f;
  FAIL("no field " << name);
  return {};
}

// The cooled tank of tank_stability_test.cpp in a case file (invented data).
constexpr const char* kCooledTank = R"(title: cooled tank (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3, thermo: {cp: 150 J/mol/K}}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3, thermo: {cp: 150 J/mol/K}}
reactions:
  - id: r1
    equation: A => B
    rate: {A: 0.0025, Ea: 49886.7757 J/mol, T_ref: 300 K, orders: {A: 1}}
    dH: -31.5 kJ/mol
feed: {T: 300 K, P: 2 bar, flows: {A: 10 mol/s}}
key: A
train:
  - {type: cstr, id: R1, volume: 0.1 m3, heat: {UA: 4.5 kW/K, coolant: {T: 300 K}}}
)";

}  // namespace

TEST_CASE("continuation passes the folds of a circle and locates them exactly", "[stability]") {
  // u^2 + p^2 = 1 from (u, p) = (-1, 0) with p rising: folds at p = 1
  // (u = 0); with p in [-0.5, 2] the branch leaves through p = -0.5 after
  // the fold at p = 1 (analytic geometry, no source needed).
  const rxtrain::BranchFunction fn = [](const Eigen::VectorXd& x, Eigen::VectorXd& H,
                                        Eigen::MatrixXd& J) {
    H[0] = x[0] * x[0] + x[1] * x[1] - 1;
    J(0, 0) = 2 * x[0];
    J(0, 1) = 2 * x[1];
  };
  Eigen::VectorXd x0(2);
  x0 << -1.0, 0.0;
  const auto r = rxtrain::continue_branch(fn, x0, +1, -0.5, 2.0, {});
  REQUIRE(r.left_range);
  REQUIRE(r.folds.size() == 1);
  CHECK(std::abs(r.folds[0].x[1] - 1.0) < 1e-12);
  CHECK(std::abs(r.folds[0].x[0]) < 1e-6);  // sqrt of the residual tolerance at a fold
  CHECK(std::abs(r.points.back().x[1] + 0.5) < 1e-12);
  CHECK(r.points.back().x[0] > 0);  // on the other half of the circle
}

TEST_CASE("continuation reproduces the closed-form ignition and extinction feed temperatures",
          "[stability]") {
  // The adiabatic first-order tank of s_curve_tank.hpp (tau = 1 s): its
  // turning points in the feed temperature from the slope condition
  // (van Heerden, Ind. Eng. Chem. 45 (1953) 1242), solved by GSL Brent.
  const rxtrain::test::FirstOrderTank t;
  const auto ref = rxtrain::test::closed_form_turning_points(t, 1.0);
  REQUIRE(ref.size() == 2);
  const double ignition_T0 = std::max(ref[0].T0, ref[1].T0);
  const double extinction_T0 = std::min(ref[0].T0, ref[1].T0);
  const double ignition_T = ref[0].T0 > ref[1].T0 ? ref[0].T : ref[1].T;
  const double extinction_T = ref[0].T0 > ref[1].T0 ? ref[1].T : ref[0].T;

  const rxtrain::UnitParser units;
  const rxtrain::Case c =
      rxtrain::load_case_from_string(rxtrain::test::kSCurveTank, "s-curve.yaml", units);
  rxtrain::StabilityOptions o;
  o.lo = 150.0;
  o.hi = 350.0;
  const auto r = rxtrain::run_stability(c, field_named(c, "feed.T"), o);
  REQUIRE(r.turning_points.size() == 2);
  const auto& ext = r.turning_points[0];
  const auto& ign = r.turning_points[1];
  CHECK(ign.kind == rxtrain::TurningKind::Ignition);
  CHECK(ext.kind == rxtrain::TurningKind::Extinction);
  CHECK(std::abs(ign.value - ignition_T0) / ignition_T0 < 1e-6);
  CHECK(std::abs(ext.value - extinction_T0) / extinction_T0 < 1e-6);
  // The whole state at the fold, not only the parameter: T to 0.01 K.
  CHECK(std::abs(ign.T - ignition_T) < 0.01);
  CHECK(std::abs(ext.T - extinction_T) < 0.01);
  REQUIRE(r.hysteresis);
  CHECK(r.hysteresis->first == ext.value);
  CHECK(r.hysteresis->second == ign.value);
  // Lower and upper branches stable, the middle one a saddle.
  REQUIRE(r.branches.size() == 3);
  CHECK(r.branches[0].stable);
  CHECK_FALSE(r.branches[1].stable);
  CHECK(r.branches[1].points[1].kind == rxtrain::StabilityKind::Saddle);
  CHECK(r.branches[2].stable);
  // Every point is a steady state of the closed form (X from T, T - T0 = J X).
  for (const auto& b : r.branches)
    for (const auto& p : b.points) {
      CHECK(std::abs(p.X - t.X(p.T, 1.0)) < 1e-8);
      CHECK(std::abs(p.T - p.value - t.J() * p.X) < 1e-6);
    }
  CHECK(r.warnings.empty());
  // van Heerden's curves at the case's feed (300 K): generation F0 (-dH)
  // X(T), removal F0 cp (T - T0).
  REQUIRE(r.heat_curves.size() > 50);
  for (const auto& h : r.heat_curves) {
    CHECK(std::abs(h.generation - t.F0 * -t.dH * t.X(h.T, 1.0)) <= 1e-8 * t.F0 * -t.dH);
    CHECK(std::abs(h.removal - t.F0 * t.cp * (h.T - 300.0)) <= 1e-9 * t.F0 * t.cp * 300.0);
  }
}

TEST_CASE("stability refuses a case without a tank of given volume", "[stability]") {
  const rxtrain::UnitParser units;
  std::string text = rxtrain::test::kSCurveTank;
  const auto at = text.find("volume: 1e-3 m3");
  text.replace(at, std::string("volume: 1e-3 m3").size(), "target: {conversion: 0.5}");
  const rxtrain::Case c = rxtrain::load_case_from_string(text, "sized.yaml", units);
  rxtrain::StabilityOptions o;
  o.lo = 290.0;
  o.hi = 310.0;
  CHECK_THROWS_WITH(rxtrain::run_stability(c, field_named(c, "feed.T"), o),
                    Catch::Contains("stability follows a tank of given volume"));
  o.stage = "R9";
  CHECK_THROWS_WITH(rxtrain::run_stability(c, field_named(c, "feed.T"), o),
                    Catch::Contains("no reactor (type: cstr or pfr) with id R9"));
}

TEST_CASE("along the coolant's UA every point's stability is the classical model's",
          "[stability]") {
  // The cooled tank of tank_stability_test.cpp (Uppal, Ray and Poore's
  // oscillatory region, from memory) with UA from 1 to 10 kW/K: every
  // point's kind against the eigenvalues of the textbook two-state model,
  // by the discriminant and trace of its 2 x 2 Jacobian (the third mode,
  // -1/tau, is stable).
  const rxtrain::UnitParser units;
  const rxtrain::Case c = rxtrain::load_case_from_string(kCooledTank, "cooled.yaml", units);
  rxtrain::StabilityOptions o;
  o.lo = 1000.0;
  o.hi = 10000.0;
  const auto r = rxtrain::run_stability(c, field_named(c, "train.R1.heat.UA"), o);
  rxtrain::test::FirstOrderTank t;
  t.ER = 49886.7757 / rxtrain::kGasConstant;
  t.T_ref = 300.0;
  t.k_ref = 0.0025;
  t.dH = -31500.0;
  t.T_c = 300.0;
  const double tau = 100.0;
  int oscillatory = 0, stable = 0;
  for (const auto& b : r.branches)
    for (const auto& p : b.points) {
      t.UA = p.value;
      const double k = t.k(p.T), dk = k * t.ER / (p.T * p.T), X = t.X(p.T, tau);
      const double NA = t.F0 * tau * (1 - X), Ch = t.F0 * tau * t.cp;
      const double a11 = -1 / tau - k, a12 = -NA * dk;
      const double a21 = -t.dH * k / Ch, a22 = (-t.F0 * t.cp - t.dH * NA * dk - t.UA) / Ch;
      const double tr = a11 + a22, det = a11 * a22 - a12 * a21;
      const bool complex_pair = tr * tr - 4 * det < 0;
      INFO("UA = " << p.value << " W/K, T = " << p.T << " K, trace " << tr << ", det " << det);
      CHECK(std::abs(t.residual(p.T, 300.0, tau)) < 1e-6);
      if (complex_pair && tr > 0) {
        CHECK(p.kind == rxtrain::StabilityKind::Oscillatory);
        ++oscillatory;
      } else if (tr < 0 && det > 0) {
        CHECK(p.kind == rxtrain::StabilityKind::Stable);
        ++stable;
      }
    }
  CHECK(oscillatory >= 5);
  CHECK(stable >= 10);
  CHECK(r.turning_points.empty());  // one steady state at every UA here
}

TEST_CASE("run warns of an unstable reported state and of a multiple-steady-state region",
          "[stability]") {
  const rxtrain::UnitParser units;
  // Three states at the case's feed (tau = 1 s, between the closed-form
  // extinction and ignition feed temperatures): two stable ones.
  const rxtrain::Case s_curve =
      rxtrain::load_case_from_string(rxtrain::test::kSCurveTank, "s-curve.yaml", units);
  const auto r = rxtrain::run_checked(s_curve, {});
  const auto has = [](const rxtrain::TrainResult& t, const std::string& text) {
    for (const auto& w : t.warnings)
      if (w.find(text) != std::string::npos) return true;
    return false;
  };
  CHECK(has(r, "stage R1: 2 stable steady states at these conditions"));
  CHECK_FALSE(has(r, "is not stable"));
  // Past ignition (feed 320 K > 312.36 K, closed form) one state: no warning.
  rxtrain::Case hot = s_curve;
  hot.feed.T = 320.0;
  const auto rh = rxtrain::run_checked(hot, {});
  CHECK_FALSE(has(rh, "stable steady states at these conditions"));
  CHECK_FALSE(has(rh, "is not stable"));
  // The cooled tank's only state is oscillatory.
  const auto rc =
      rxtrain::run_checked(rxtrain::load_case_from_string(kCooledTank, "cooled.yaml", units), {});
  CHECK(has(rc, "is not stable (oscillatory): the tank cannot hold it without control"));
}

TEST_CASE("stages before the tank give its inlet at every value of the field", "[stability]") {
  // A heater setting the tank's inlet temperature: varying its T_out must
  // give the turning points of varying the feed temperature of the tank
  // alone.
  const rxtrain::UnitParser units;
  const rxtrain::Case alone =
      rxtrain::load_case_from_string(rxtrain::test::kSCurveTank, "s-curve.yaml", units);
  std::string text = rxtrain::test::kSCurveTank;
  const std::string tank = "  - {type: cstr, id: R1, volume: 1e-3 m3}";
  text.replace(text.find(tank), tank.size(),
               "  - {type: exchanger, id: E1, T_out: 290 K}\n" + tank);
  const rxtrain::Case heated = rxtrain::load_case_from_string(text, "heated.yaml", units);
  rxtrain::StabilityOptions o;
  o.lo = 250.0;
  o.hi = 330.0;
  const auto a = rxtrain::run_stability(alone, field_named(alone, "feed.T"), o);
  const auto h = rxtrain::run_stability(heated, field_named(heated, "train.E1.T_out"), o);
  REQUIRE(a.turning_points.size() == 1);  // ignition only: extinction is below 250 K
  REQUIRE(h.turning_points.size() == a.turning_points.size());
  CHECK(std::abs(h.turning_points[0].value - a.turning_points[0].value) < 1e-6);
  CHECK(std::abs(h.turning_points[0].T - a.turning_points[0].T) < 1e-6);
  CHECK(h.stage == "R1");
}

TEST_CASE("run's flip check names the ignition and extinction points within its margin",
          "[stability]") {
  // The S-curve tank at 300 K feed: ignition at a feed of 312.3646 K and
  // extinction at 192.5110 K (closed form, slope condition).
  const rxtrain::UnitParser units;
  const rxtrain::Case c =
      rxtrain::load_case_from_string(rxtrain::test::kSCurveTank, "s-curve.yaml", units);
  const auto r = rxtrain::run_checked(c, {});
  CHECK(rxtrain::flip_warnings(c, r, 10.0).empty());
  CHECK(rxtrain::flip_warnings(c, r, 0.0).empty());
  const auto one = rxtrain::flip_warnings(c, r, 15.0);
  REQUIRE(one.size() == 1);
  CHECK_THAT(one[0], Catch::Contains("a feed temperature 12.36 K above the case's (26.85 °C) "
                                     "ignites the tank"));
  const auto two = rxtrain::flip_warnings(c, r, 110.0);
  REQUIRE(two.size() == 2);
  CHECK_THAT(two[0], Catch::Contains("107.49 K below") && Catch::Contains("extinguishes"));
}

TEST_CASE("continuation in the rate constant stays on each branch and finds both folds",
          "[stability]") {
  // The S-curve tank (T0 = 300 K, tau = 1 s) with k_ref varied: on the
  // curve X = (T - T0)/J and k_ref = X / ((1 - X) tau exp(-ER (1/T -
  // 1/T_ref))); its folds in k_ref satisfy the same slope condition J X
  // (1 - X) ER / T^2 = 1 (van Heerden 1953), solved here by GSL Brent. The
  // upper branch is nearly flat (X close to 1): a corrector that jumped to
  // another branch there once gave the ignition twice.
  const rxtrain::test::FirstOrderTank t;
  const double T0 = 300.0, tau = 1.0;
  const auto folds = rxtrain::test::gsl_roots(
      [&](double T) {
        const double X = (T - T0) / t.J();
        return t.J() * X * (1 - X) * t.ER / (T * T) - 1;
      },
      T0 + 1e-3, T0 + t.J() - 1e-3, 0.01);
  REQUIRE(folds.size() == 2);
  std::vector<double> k_folds;
  for (double T : folds) {
    const double X = (T - T0) / t.J();
    k_folds.push_back(X / ((1 - X) * tau * std::exp(-t.ER * (1 / T - 1 / t.T_ref))));
  }
  std::sort(k_folds.begin(), k_folds.end());
  const rxtrain::UnitParser units;
  const rxtrain::Case c =
      rxtrain::load_case_from_string(rxtrain::test::kSCurveTank, "s-curve.yaml", units);
  rxtrain::StabilityOptions o;
  o.lo = 0.5 * k_folds[0];
  o.hi = 2.0 * k_folds[1];
  const auto r = rxtrain::run_stability(c, field_named(c, "reactions.r1.rate.A"), o);
  REQUIRE(r.turning_points.size() == 2);
  CHECK(r.turning_points[0].kind == rxtrain::TurningKind::Extinction);
  CHECK(r.turning_points[1].kind == rxtrain::TurningKind::Ignition);
  CHECK(std::abs(r.turning_points[0].value - k_folds[0]) / k_folds[0] < 1e-6);
  CHECK(std::abs(r.turning_points[1].value - k_folds[1]) / k_folds[1] < 1e-6);
  REQUIRE(r.branches.size() == 3);
  for (const auto& b : r.branches)
    for (const auto& p : b.points) {
      const double X = (p.T - T0) / t.J();
      CHECK(std::abs(p.X - X) < 1e-8);  // on the adiabatic line: no jump off the curve
    }
  CHECK(r.warnings.empty());
}

TEST_CASE("continuation stays on the demo tank's flat hot branch", "[stability]") {
  // cases/isomerization-tank-three-states.yaml (invented data) with its
  // rate constant varied from 0.001 to 0.1 1/s: first order in M at a
  // constant volumetric flow (M and I share their molar volume), so on the
  // curve X = (T - T0)/J with J = -dH F_M / sum F cp and k_ref = X / ((1 -
  // X) tau exp(-ER (1/T - 1/T_ref))), folds where J X (1 - X) ER / T^2 = 1
  // (van Heerden 1953; GSL Brent here). The hot branch is nearly flat (X
  // close to 1): without the corrector's distance check the trace from it
  // jumped to the cold branch and met the ignition twice.
  const double T0 = 298.15, J = 60000.0 * 8 / (8 * 180.0 + 40 * 75.0);
  const double ER = 120000.0 / rxtrain::kGasConstant, T_ref = 350.0;
  const double tau = 2.0 / (8 * 0.1 / 900 + 40 * 0.018 / 1000);
  const auto folds = rxtrain::test::gsl_roots(
      [&](double T) {
        const double X = (T - T0) / J;
        return J * X * (1 - X) * ER / (T * T) - 1;
      },
      T0 + 1e-3, T0 + J - 1e-3, 0.01);
  REQUIRE(folds.size() == 2);
  std::vector<double> k_in_range;
  for (double T : folds) {
    const double X = (T - T0) / J;
    const double k = X / ((1 - X) * tau * std::exp(-ER * (1 / T - 1 / T_ref)));
    if (k > 0.001 && k < 0.1) k_in_range.push_back(k);
  }
  REQUIRE(k_in_range.size() == 1);  // the ignition; the extinction lies below 0.001 1/s
  const rxtrain::UnitParser units;
  const rxtrain::Case c = rxtrain::load_case(
      (std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases/isomerization-tank-three-states.yaml")
          .string(),
      units);
  rxtrain::StabilityOptions o;
  o.lo = 0.001;
  o.hi = 0.1;
  const auto r = rxtrain::run_stability(c, field_named(c, "reactions.isom.rate.A"), o);
  REQUIRE(r.turning_points.size() == 1);
  CHECK(r.turning_points[0].kind == rxtrain::TurningKind::Ignition);
  CHECK(std::abs(r.turning_points[0].value - k_in_range[0]) / k_in_range[0] < 1e-6);
  for (const auto& b : r.branches)
    for (const auto& p : b.points) CHECK(std::abs(p.X - (p.T - T0) / J) < 1e-8);
  // Cold branch to the ignition, middle back to 0.001, hot branch from
  // 0.001 to 0.1 and hot all the way (X > 0.99 on it).
  REQUIRE(r.branches.size() == 3);
  const auto& hot = r.branches[2];
  CHECK(hot.stable);
  CHECK(hot.points.front().value == Approx(0.001).epsilon(1e-12));
  CHECK(hot.points.back().value == Approx(0.1).epsilon(1e-12));
  for (const auto& p : hot.points) CHECK(p.X > 0.99);
  CHECK(r.warnings.empty());
}

TEST_CASE("a range that starts on the field's bound is followed from there", "[stability]") {
  // heat_capacity may be 0 but not below: the parameter derivative is
  // one-sided there. It moves no steady state, so every branch is flat.
  const rxtrain::UnitParser units;
  const rxtrain::Case c = rxtrain::load_case(
      (std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases/isomerization-tank-three-states.yaml")
          .string(),
      units);
  rxtrain::StabilityOptions o;
  o.lo = 0.0;
  o.hi = 5e6;
  const auto r = rxtrain::run_stability(c, field_named(c, "train.R1.heat_capacity"), o);
  CHECK(r.warnings.empty());
  CHECK(r.turning_points.empty());
  REQUIRE(r.branches.size() == 3);
  for (const auto& b : r.branches) {
    CHECK(b.points.front().value == 0.0);
    CHECK(b.points.back().value == Approx(5e6).epsilon(1e-12));
    CHECK(std::abs(b.points.back().T - b.points.front().T) < 1e-8);
  }
}

TEST_CASE("a field that moves the feed measures conversion against the key fed at that value",
          "[stability]") {
  // The S-curve tank with its feed flow varied: every steady state lies on
  // the adiabatic line X = (T - T0) / J whatever the flow (energy balance
  // of an adiabatic tank with dCp = 0).
  const rxtrain::test::FirstOrderTank t;
  const rxtrain::UnitParser units;
  const rxtrain::Case c =
      rxtrain::load_case_from_string(rxtrain::test::kSCurveTank, "s-curve.yaml", units);
  rxtrain::StabilityOptions o;
  o.lo = 2.0;
  o.hi = 40.0;
  const auto r = rxtrain::run_stability(c, field_named(c, "feed.flow"), o);
  REQUIRE_FALSE(r.branches.empty());
  for (const auto& b : r.branches)
    for (const auto& p : b.points) CHECK(std::abs(p.X - (p.T - 300.0) / t.J()) < 1e-8);
  for (const auto& tp : r.turning_points) CHECK(std::abs(tp.X - (tp.T - 300.0) / t.J()) < 1e-8);
}
