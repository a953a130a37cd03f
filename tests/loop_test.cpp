// Feed-effluent loops (flowsheet/loop.hpp): the interchanger's exchange
// against the effectiveness-NTU closed forms, every steady state of a loop
// around a first-order exothermic bed against an independent scan written
// here (GSL), and the loop-gain stability condition against a direct
// perturbation run.
#include "rxtrain/flowsheet/loop.hpp"

#include <fmt/format.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/analysis/stability.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/models/heat_exchange.hpp"
#include "rxtrain/studies/bed_layout.hpp"
#include "rxtrain/studies/compare.hpp"

namespace {

using rxtrain::FlowArrangement;

// A liquid first-order M => I in a solvent S, invented data. cp_M = cp_I
// and constant, so dH does not vary with T and both sides of the
// interchanger carry the same heat capacity flow, C = 8 * 180 + 40 * 75 =
// 4440 W/K; equal molar volumes of M and I keep the volumetric flow q
// constant along the bed.
constexpr double kFM = 8, kFS = 40;                          // mol/s
constexpr double kC = kFM * 180 + kFS * 75;                  // W/K
constexpr double kQ = kFM * 0.1 / 900 + kFS * 0.018 / 1000;  // m3/s
constexpr double kDH = -60e3, kA = 0.01, kEa = 120e3, kTref = 350;
constexpr double kR = 8.314462618;

std::string loop_case(const std::string& train, double T_feed = 300) {
  return fmt::format(R"(title: first-order loop (invented data)
phase: liquid
species:
  - {{id: M, mw: 0.1 kg/mol, density: 900 kg/m3, thermo: {{cp: 180 J/mol/K}}}}
  - {{id: I, mw: 0.1 kg/mol, density: 900 kg/m3, thermo: {{cp: 180 J/mol/K}}}}
  - {{id: S, mw: 0.018 kg/mol, density: 1000 kg/m3, thermo: {{cp: 75 J/mol/K}}}}
reactions:
  - id: isom
    equation: M => I
    rate: {{A: 0.01 1/s, Ea: 120 kJ/mol, T_ref: 350 K, orders: {{M: 1}}}}
    dH: -60 kJ/mol
feed: {{T: {} K, P: 3 bar, flows: {{M: 8 mol/s, S: 40 mol/s}}}}
key: M
train:
{})",
                     T_feed, train);
}

rxtrain::Case load(const std::string& text) {
  rxtrain::UnitParser units;
  return rxtrain::load_case_from_string(text, "loop.yaml", units);
}

// Incropera and DeWitt, Fundamentals of Heat and Mass Transfer, ch. 11
// (Table 11.3), written out here as printed.
double counter_closed_form(double NTU, double Cr) {
  if (Cr == 1) return NTU / (1 + NTU);
  return (1 - std::exp(-NTU * (1 - Cr))) / (1 - Cr * std::exp(-NTU * (1 - Cr)));
}
double parallel_closed_form(double NTU, double Cr) {
  return (1 - std::exp(-NTU * (1 + Cr))) / (1 + Cr);
}

}  // namespace

TEST_CASE("interchanger effectiveness equals the effectiveness-NTU closed forms", "[loop]") {
  // Incropera and DeWitt, ch. 11, Table 11.3.
  for (double NTU : {0.1, 0.5, 1.0, 2.0, 4.5}) {
    for (double Cr : {0.0, 0.25, 0.5, 0.9, 1.0}) {
      INFO("NTU " << NTU << " Cr " << Cr);
      CHECK(std::abs(rxtrain::exchanger_effectiveness(FlowArrangement::Counter, NTU, Cr) -
                     counter_closed_form(NTU, Cr)) < 1e-12);
      CHECK(std::abs(rxtrain::exchanger_effectiveness(FlowArrangement::Parallel, NTU, Cr) -
                     parallel_closed_form(NTU, Cr)) < 1e-12);
    }
  }
  // Counter flow near Cr = 1 tends to NTU / (1 + NTU) smoothly.
  CHECK(std::abs(rxtrain::exchanger_effectiveness(FlowArrangement::Counter, 2.0, 1 - 1e-9) -
                 2.0 / 3.0) < 1e-8);
}

TEST_CASE("two streams of constant heat capacity exchange eps C_min dT", "[loop]") {
  // Incropera and DeWitt, ch. 11: q = eps C_min (T_h,i - T_c,i), each
  // outlet from its own heat balance.
  for (auto arr : {FlowArrangement::Counter, FlowArrangement::Parallel}) {
    const double Cc = 3000, Ch = 5000, UA = 4000, Tc = 320, Th = 610;
    const auto x = rxtrain::exchange_heat(
        arr, UA, Tc, Th, [&](double) { return Cc; }, [&](double) { return Ch; });
    const double NTU = UA / Cc, Cr = Cc / Ch;
    const double eps = arr == FlowArrangement::Counter ? counter_closed_form(NTU, Cr)
                                                       : parallel_closed_form(NTU, Cr);
    CHECK(std::abs(x.duty - eps * Cc * (Th - Tc)) < 1e-8 * x.duty);
    CHECK(std::abs(x.T_cold_out - (Tc + eps * (Th - Tc))) < 1e-8);
    CHECK(std::abs(x.T_hot_out - (Th - eps * Cc * (Th - Tc) / Ch)) < 1e-8);
  }
}

TEST_CASE("a loop without reaction heats its feed by the effectiveness-NTU closed form", "[loop]") {
  // The cold side heats the feed with the stream a heater brought to 500 K:
  // the hot inlet does not depend on the tear, so the loop's one state is
  // T_c,out = T_feed + eps (500 K - T_feed), Cr = 1 (one stream, constant
  // cp; Incropera and DeWitt, ch. 11).
  for (const char* arr : {"counter", "parallel"}) {
    const double UA = 2.5 * kC;  // NTU 2.5
    const auto c =
        load(loop_case(fmt::format("  - {{type: interchanger, id: X1, hot_from: E1, "
                                   "UA: {} W/K, arrangement: {}}}\n"
                                   "  - {{type: exchanger, id: E1, T_out: 500 K}}\n",
                                   UA, arr)));
    rxtrain::TrainOptions o;
    o.equilibrium_views = false;
    const auto r = rxtrain::run_train(c, o);
    const bool counter = std::string(arr) == "counter";
    const double eps = counter ? counter_closed_form(2.5, 1) : parallel_closed_form(2.5, 1);
    INFO(arr);
    REQUIRE(r.loop_states.size() == 1);
    CHECK(std::abs(r.loop_states[0].T_cold_out - (300 + eps * 200)) < 1e-8);
    CHECK(r.loop_states[0].stable());
    REQUIRE(r.stages.size() == 2);
    const auto& x = *r.stages[0].interchanger;
    CHECK(std::abs(x.effectiveness - eps) < 1e-12);
    CHECK(std::abs(r.stages[0].outlet.T - (300 + eps * 200)) < 1e-8);
    // The hot side gives what the cold side takes: the train's outlet.
    CHECK(std::abs(r.outlet.T - (500 - eps * 200)) < 1e-8);
    CHECK(std::abs(x.duty - eps * kC * 200) < 1e-6);
  }
}

namespace {

// The bed's outlet temperature for an inlet T_in, integrated here. With
// X = 1 - exp(-u) the plug-flow balance of a first-order adiabatic bed,
// dX/dV = k(T) (1 - X) / q with T = T_in + dT_ad X (dT_ad = (-dH) F_M / C),
// becomes du/dV = k(T) / q: not stiff however fast the bed lights, since
// nothing in it decays (GSL rk8pd, 1e-13).
double gsl_bed_outlet(double T_in, double V) {
  rxtrain::test::GslNoAbort quiet;
  const double dT_ad = -kDH * kFM / kC;
  rxtrain::test::GslOde ode(
      1,
      [&](const double* y, double* dy) {
        const double T = T_in + dT_ad * -std::expm1(-y[0]);
        dy[0] = kA * std::exp(-kEa / kR * (1 / T - 1 / kTref)) / kQ;
      },
      1e-13, 1e-13);
  std::vector<double> y{0.0};
  ode.advance(0, V, y);
  return T_in + dT_ad * -std::expm1(-y[0]);
}

// The loop's residual at an assumed tear T: counter flow, NTU = UA / C,
// Cr = 1, eps = NTU / (1 + NTU) (Incropera and DeWitt, ch. 11).
double gsl_residual(double T, double T_feed, double V, double UA) {
  const double NTU = UA / kC, eps = NTU / (1 + NTU);
  return T_feed + eps * (gsl_bed_outlet(T, V) - T_feed) - T;
}

// Every root of the residual on a 0.5 K grid over [T_feed, T_feed + 250],
// each polished by GSL's Brent to 1e-10 K.
std::vector<double> gsl_roots(double T_feed, double V, double UA) {
  std::vector<double> roots;
  const auto f = [&](double T) { return gsl_residual(T, T_feed, V, UA); };
  double T0 = T_feed, f0 = f(T0);
  for (double T1 = T_feed + 0.5; T1 <= T_feed + 250; T1 += 0.5) {
    const double f1 = f(T1);
    if ((f0 > 0) != (f1 > 0)) roots.push_back(rxtrain::test::gsl_brent(f, T0, T1, 1e-10));
    T0 = T1;
    f0 = f1;
  }
  return roots;
}

const char* kBedLoop =
    "  - {type: interchanger, id: X1, hot_from: R1, UA: 4440 W/K}\n"
    "  - {type: pfr, id: R1, volume: 0.1 m3}\n"
    "  - {type: exchanger, id: E1, T_out: 310 K}\n";

rxtrain::TrainOptions tight() {
  rxtrain::TrainOptions o;
  o.equilibrium_views = false;
  o.solvers.tube.cvode.rtol = 1e-11;
  o.solvers.tube.cvode.atol = 1e-14;
  return o;
}

}  // namespace

TEST_CASE("a first-order bed in a loop has the three steady states of an independent scan",
          "[loop]") {
  const auto c = load(loop_case(kBedLoop));
  const auto r = rxtrain::run_train(c, tight());
  const auto ref = gsl_roots(300, 0.1, 4440);
  REQUIRE(ref.size() == 3);
  REQUIRE(r.loop_states.size() == 3);
  for (std::size_t k = 0; k < 3; ++k) {
    INFO("state " << k << ": " << r.loop_states[k].T_cold_out << " K against " << ref[k]);
    CHECK(std::abs(r.loop_states[k].T_cold_out - ref[k]) < 1e-6);
  }
  // The outer states hold, the middle one does not (van Heerden's slope
  // condition on the loop: docs/stability.md).
  CHECK(r.loop_states[0].stable());
  CHECK_FALSE(r.loop_states[1].stable());
  CHECK(r.loop_states[2].stable());
  // The cold start is the lowest, and the stages describe it.
  CHECK(r.loop_cold_start == 0);
  CHECK(std::abs(r.stages[0].outlet.T - ref[0]) < 1e-6);
  // The result says there are several, and so does the interchanger's
  // stage (a sweep's row reads its stages' warnings).
  bool said = false;
  for (const auto& s : r.warnings)
    said = said || s.find("has 3 steady states") != std::string::npos;
  CHECK(said);
  REQUIRE(r.stages[0].warnings.size() == 1);
  CHECK(r.stages[0].warnings[0].find("has 3 steady states") != std::string::npos);
}

TEST_CASE("the loop gain tells what a perturbation run does", "[loop]") {
  // Successive substitution T <- g(T) from 0.05 K off each state: it moves
  // away from a state whose gain exceeds 1 and comes back to the others
  // (docs/stability.md, "Feed-effluent loops").
  const auto c = load(loop_case(kBedLoop));
  const auto o = tight();
  rxtrain::TrainWorkspace ws;
  const rxtrain::LoopMap g(c, o, ws);
  const auto sol = rxtrain::solve_loop(g, o.loop);
  REQUIRE(sol.states.size() == 3);
  for (const auto& s : sol.states) {
    for (double d : {-0.05, 0.05}) {
      double T = s.T_cold_out + d;
      for (int k = 0; k < 8; ++k) T = g(T).T_computed;
      INFO("state " << s.T_cold_out << " gain " << s.gain << " start " << d);
      if (s.stable())
        CHECK(std::abs(T - s.T_cold_out) < 0.5 * std::abs(d));
      else
        CHECK(std::abs(T - s.T_cold_out) > 2 * std::abs(d));
    }
    // The gain against a central difference of the test's own map.
    const double h = 1e-3, NTU = 1.0, eps = NTU / (1 + NTU);
    const double ref =
        eps * (gsl_bed_outlet(s.T_cold_out + h, 0.1) - gsl_bed_outlet(s.T_cold_out - h, 0.1)) /
        (2 * h);
    CHECK(std::abs(s.gain - ref) < 1e-5 * std::max(1.0, std::abs(ref)));
  }
}

TEST_CASE("studies that do not solve loops refuse them", "[loop]") {
  // A target, so that staging and optimize reach their check of the train.
  auto text = loop_case(kBedLoop);
  text.replace(text.find("key: M\n"), 7,
               "key: M\ntarget: {conversion: 0.9}\nlimits: {T_max: 600 K, T_in_min: 300 K}\n");
  const auto c = load(text);
  rxtrain::TrainOptions o;
  o.equilibrium_views = false;
  CHECK_FALSE(rxtrain::train_batchable(c, o));  // sweeps run each point alone
  for (auto study : {rxtrain::LayoutStudy::Staging, rxtrain::LayoutStudy::Optimize}) {
    try {
      rxtrain::check_layout_case(c, study);
      FAIL("a loop was taken");
    } catch (const rxtrain::InputError& e) {
      CHECK(std::string(e.what()).find("does not solve loops") != std::string::npos);
      CHECK(e.where().line == 17);  // the interchanger's entry
    }
  }
  CHECK_THROWS_WITH(rxtrain::compare_layouts(c), Catch::Matchers::Contains("does not solve loops"));
}

TEST_CASE("continuation locates a loop's ignition feed temperature of an independent scan",
          "[loop]") {
  // The fold of the loop in the feed temperature T0: F(T; T0) = 0 and
  // dF/dT = 0, i.e. eps dT_h/dT = 1 with T_h the bed's outlet (it does not
  // depend on T0); then T0 = (T - eps T_h(T)) / (1 - eps). Located here by
  // a 0.5 K scan of eps dT_h/dT - 1 (central differences of GSL rk8pd
  // runs) and GSL's Brent.
  const double eps = 0.5;
  const auto G = [&](double T) {
    const double h = 1e-3;
    return eps * (gsl_bed_outlet(T + h, 0.1) - gsl_bed_outlet(T - h, 0.1)) / (2 * h) - 1;
  };
  double T_fold = 0;
  for (double T = 315; T < 335 && T_fold == 0; T += 0.5)
    if (G(T) < 0 && G(T + 0.5) > 0) T_fold = rxtrain::test::gsl_brent(G, T, T + 0.5, 1e-9);
  REQUIRE(T_fold > 0);
  const double T0_fold = (T_fold - eps * gsl_bed_outlet(T_fold, 0.1)) / (1 - eps);

  const auto c = load(loop_case(kBedLoop));
  rxtrain::CaseField feed_T;
  for (const auto& f : rxtrain::case_fields(c))
    if (f.name == "feed.T") feed_T = f;
  rxtrain::StabilityOptions o;
  o.lo = 310;
  o.hi = 330;
  const auto r = rxtrain::run_stability(c, feed_T, o);
  CHECK(r.loop);
  REQUIRE(r.turning_points.size() == 1);
  const auto& tp = r.turning_points[0];
  INFO("fold at T0 = " << tp.value << " K, T = " << tp.T << " K; the scan's " << T0_fold << ", "
                       << T_fold);
  CHECK(tp.kind == rxtrain::TurningKind::Ignition);
  CHECK(std::abs(tp.value - T0_fold) < 1e-4);
  CHECK(std::abs(tp.T - T_fold) < 0.01);
  // Both kinds of branch were followed.
  bool stable = false, unstable = false;
  for (const auto& b : r.branches) (b.stable ? stable : unstable) = true;
  CHECK(stable);
  CHECK(unstable);
}
