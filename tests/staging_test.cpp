// The interstage-cooling check (staging.hpp) and the design warnings
// (design_checks.hpp), against an independent calculation written here:
// A <=> B with equal constant heat capacities, an inert, and a van 't Hoff
// K with constant dH (so dCp = 0, as the van 't Hoff form assumes). Then
//   adiabatic line:  T = T_in + lambda (X - X_in),
//                    lambda = -dH F_A0 / sum_i F_i cp_i  (steady-flow first law,
//                    constant cp: the standard adiabatic relation);
//   equilibrium:     X_eq(T) = K(T) / (1 + K(T))  (A <=> B, no B in the feed,
//                    no mole change: K = x_B / x_A = X / (1 - X));
//   K(T)             = K_ref exp(-dH/R (1/T - 1/T_ref))  (integrated van 't Hoff);
// the adiabatic equilibrium point by bisection on X - X_eq(T(X)), and bed
// volumes by quadrature (GSL QAGS) of the PFR design equation
//   V = F_A0 integral dX / r(X, T(X)),  r = k(T) C_A (1 - Q/K), Q = X / (1 - X).
// Every kinetic and thermal value is invented test data.
#include "rxtrain/studies/staging.hpp"

#include <fmt/format.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "run_command.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/report/staging_report.hpp"

using namespace rxtrain;

namespace {

constexpr double R = 8.31446261815324;  // J/(mol K), exact (2019 SI; reference-data.md §6)

// The invented A <=> B system and its independent solution.
struct AbSystem {
  double K_ref = 4.0;                            // K at T_ref
  double T_ref = 600.0;                          // K
  double dH = -40e3;                             // J/mol
  double T_feed = 600.0;                         // K
  double P = 2e5;                                // Pa
  double F_A0 = 10.0, F_I0 = 40.0;               // mol/s
  double cp_A = 40.0, cp_B = 40.0, cp_I = 30.0;  // J/(mol K)
  double k_ref = 0.5;                            // 1/s at T_ref
  double Ea = 80e3;                              // J/mol

  double C() const { return F_A0 * cp_A + F_I0 * cp_I; }  // W/K, constant along the bed
  double lambda() const { return -dH * F_A0 / C(); }      // K per unit conversion
  double K(double T) const { return K_ref * std::exp(-dH / R * (1 / T - 1 / T_ref)); }
  double X_eq(double T) const { return K(T) / (1 + K(T)); }
  double T_at(double X_in, double T_in, double X) const { return T_in + lambda() * (X - X_in); }

  // Where the adiabatic line from (X_in, T_in) meets equilibrium: g(X) =
  // X - X_eq(T(X)) rises from < 0 at X_in to > 0 at X = 1 for either sign
  // of dH, so bisection brackets the one root.
  double X_ad(double X_in, double T_in) const {
    double lo = X_in, hi = 1.0;
    for (int i = 0; i < 200; ++i) {
      const double m = 0.5 * (lo + hi);
      (m - X_eq(T_at(X_in, T_in, m)) > 0 ? hi : lo) = m;
    }
    return 0.5 * (lo + hi);
  }

  double rate(double X, double T) const {
    const double k = k_ref * std::exp(-Ea / R * (1 / T - 1 / T_ref));
    const double F_t = F_A0 + F_I0;
    const double C_A = F_A0 * (1 - X) * P / (F_t * R * T);
    return k * C_A * (1 - X / ((1 - X) * K(T)));
  }

  // V = F_A0 integral_{X_in}^{X_out} dX / r(X, T(X)) by GSL QAGS.
  double volume(double X_in, double T_in, double X_out) const {
    struct Ctx {
      const AbSystem* s;
      double X_in, T_in;
    } ctx{this, X_in, T_in};
    gsl_function f;
    f.function = [](double X, void* p) {
      const auto* c = static_cast<const Ctx*>(p);
      return c->s->F_A0 / c->s->rate(X, c->s->T_at(c->X_in, c->T_in, X));
    };
    f.params = &ctx;
    std::unique_ptr<gsl_integration_workspace, void (*)(gsl_integration_workspace*)> w(
        gsl_integration_workspace_alloc(2000), gsl_integration_workspace_free);
    double result = 0, error = 0;
    const int status =
        gsl_integration_qags(&f, X_in, X_out, 0.0, 1e-11, 2000, w.get(), &result, &error);
    REQUIRE(status == GSL_SUCCESS);
    return result;
  }

  // The YAML case of this system.
  std::string yaml(const std::string& extra, const std::string& train) const {
    return fmt::format(
        R"(title: A <=> B staging test (invented data)
phase: gas
species:
  - {{id: A, thermo: {{cp: {} J/mol/K}}}}
  - {{id: B, thermo: {{cp: {} J/mol/K}}}}
  - {{id: I, thermo: {{cp: {} J/mol/K}}}}
reactions:
  - id: r
    equation: A <=> B
    rate: {{A: {} 1/s, Ea: {} J/mol, T_ref: {} K}}
    dH: {} J/mol
    equilibrium: {{K: {}, T: {} K, dH: {} J/mol}}
feed: {{T: {} K, P: {} Pa, flows: {{A: {} mol/s, I: {} mol/s}}}}
key: A
{}
train:
{}
)",
        cp_A, cp_B, cp_I, k_ref, Ea, T_ref, dH, K_ref, T_ref, dH, T_feed, P, F_A0, F_I0, extra,
        train);
  }
  Case load(const std::string& extra, const std::string& train) const {
    const UnitParser units;
    return load_case_from_string(yaml(extra, train), "ab.yaml", units);
  }
};

// The policy of staging.hpp, applied to the independent solution: each bed
// from the feed temperature, ending at approach F of the way to X_ad, at
// T_limit, or at the target. Returns the outlet conversions.
std::vector<double> independent_beds(const AbSystem& s, double target, double F,
                                     std::optional<double> T_limit, int max_beds = 10) {
  std::vector<double> X_out;
  double X = 0;
  for (int k = 0; k < max_beds && X < target - 1e-12; ++k) {
    double X_end = X + F * (s.X_ad(X, s.T_feed) - X);
    if (T_limit) X_end = std::min(X_end, X + (*T_limit - s.T_feed) / s.lambda());
    X = std::min(X_end, target);
    X_out.push_back(X);
  }
  return X_out;
}

const std::string kOneBed = "  - {type: pfr, id: R1, volume: 20 m3}";

std::filesystem::path write_temp(const std::string& name, const std::string& text) {
  const auto p = std::filesystem::temp_directory_path() / name;
  std::ofstream(p) << text;
  return p;
}

}  // namespace

TEST_CASE("an equilibrium-limited bed: three beds with two intercoolers reach the target",
          "[staging]") {
  const AbSystem s;  // K = 4 at 600 K: X_eq(600 K) = 0.8
  const double target = 0.70;
  const Case c = s.load("target: {conversion: 0.70}", kOneBed);
  const StagingResult r = run_staging(c);

  // The independent answer: one bed meets equilibrium short of the target,
  // two beds fall short, the third reaches it.
  const double X_ad1 = s.X_ad(0, s.T_feed);
  REQUIRE(X_ad1 < target);
  const auto X_beds = independent_beds(s, target, 0.9, std::nullopt);
  REQUIRE(X_beds.size() == 3);
  REQUIRE(X_beds[1] < target);

  // As given: one 20 m3 bed, limited by equilibrium.
  CHECK_FALSE(r.reachable);
  CHECK(r.limited_by == StagingLimit::Equilibrium);
  CHECK(r.limiting_stage == "R1");
  REQUIRE(r.as_given.size() == 1);
  CHECK(r.as_given[0].X_ad_eq.value() == Approx(X_ad1).epsilon(1e-8));
  CHECK(r.as_given[0].T_ad_eq.value() == Approx(s.T_at(0, s.T_feed, X_ad1)).epsilon(1e-8));
  CHECK_THAT(as_given_answer_text(r), Catch::Contains("meets equilibrium"));

  // Staged: three beds, two coolers back to the feed temperature.
  REQUIRE(r.target_reached);
  CHECK(r.beds_needed == 3);
  REQUIRE(r.beds.size() == 3);
  REQUIRE(r.coolers.size() == 2);
  double X_in = 0;
  for (std::size_t k = 0; k < 3; ++k) {
    const StagedBed& b = r.beds[k];
    INFO("bed " << b.id);
    CHECK(b.T_in == Approx(s.T_feed).epsilon(1e-12));
    CHECK(b.X_in == Approx(X_in).margin(1e-9));
    CHECK(b.X_ad_eq == Approx(s.X_ad(X_in, s.T_feed)).epsilon(1e-8));
    CHECK(b.X_out == Approx(X_beds[k]).epsilon(1e-8));
    CHECK(b.T_out == Approx(s.T_at(X_in, s.T_feed, X_beds[k])).epsilon(1e-8));
    CHECK(b.T_max == Approx(b.T_out).epsilon(1e-8));  // exothermic: hottest at the outlet
    CHECK(b.volume == Approx(s.volume(X_in, s.T_feed, X_beds[k])).epsilon(1e-5));
    CHECK(b.ended_by == (k < 2 ? "approach" : "target"));
    X_in = X_beds[k];
  }
  for (std::size_t k = 0; k < 2; ++k) {
    // Sensible heat of the whole stream between the bed outlet and the
    // feed temperature (constant cp, sum F cp unchanged by A <=> B).
    CHECK(r.coolers[k].T_in == Approx(r.beds[k].T_out).epsilon(1e-12));
    CHECK(r.coolers[k].T_out == Approx(s.T_feed).epsilon(1e-12));
    CHECK(r.coolers[k].duty == Approx(s.C() * (s.T_feed - r.beds[k].T_out)).epsilon(1e-9));
    CHECK(r.coolers[k].duty < 0);
  }
  // Inlet policy: any number of beds approaches X_eq(T_feed) = 0.8.
  CHECK(r.conversion_limit.value() == Approx(s.X_eq(s.T_feed)).epsilon(1e-9));
  CHECK_THAT(staged_answer_text(r), Catch::Contains("3 adiabatic beds with 2 intercoolers"));
  const std::string text = format_staging_report(r);
  CHECK_THAT(text, Catch::Contains("limited by equilibrium"));
  CHECK_THAT(text, Catch::Contains("licensed engineers"));
  CHECK(text.find("nan") == std::string::npos);
}

TEST_CASE("T_max, not equilibrium, forces the split", "[staging]") {
  AbSystem s;
  s.K_ref = 50;  // X_eq(600 K) = 0.98: equilibrium allows far more than the target
  const double target = 0.5, T_max = 650;
  const Case c = s.load("target: {conversion: 0.5}\nlimits: {T_max: 650 K}", kOneBed);
  REQUIRE(s.X_ad(0, s.T_feed) > target);
  const StagingResult r = run_staging(c);

  // As given: the bed passes T_max where T_feed + lambda X = T_max.
  const double X_cross = (T_max - s.T_feed) / s.lambda();  // 0.2
  CHECK_FALSE(r.reachable);
  CHECK(r.limited_by == StagingLimit::TMax);
  CHECK(r.limiting_stage == "R1");
  REQUIRE(r.limit_point.has_value());
  CHECK(r.limit_point->X == Approx(X_cross).epsilon(1e-8));
  CHECK(r.limit_point->V == Approx(s.volume(0, s.T_feed, X_cross)).epsilon(1e-5));
  CHECK_FALSE(r.limit_point->beyond_bed);
  CHECK_THAT(as_given_answer_text(r), Catch::Contains("passes T_max"));
  CHECK_THAT(as_given_answer_text(r), Catch::Contains("before the target"));

  // Staged: every bed adds (T_max - T_feed) / lambda = 0.2 -> 0.2, 0.4, 0.5.
  const auto X_beds = independent_beds(s, target, 0.9, T_max);
  REQUIRE(X_beds.size() == 3);
  REQUIRE(r.target_reached);
  CHECK(r.beds_needed == 3);
  REQUIRE(r.beds.size() == 3);
  for (std::size_t k = 0; k < 3; ++k) {
    INFO("bed " << k + 1);
    CHECK(r.beds[k].X_out == Approx(X_beds[k]).epsilon(1e-8));
    CHECK(r.beds[k].T_max <= T_max * (1 + 1e-9));
    CHECK(r.beds[k].ended_by == (k < 2 ? "T_max" : "target"));
    // Equilibrium is never what stops a bed here.
    CHECK(r.beds[k].X_ad_eq > r.beds[k].X_out + 0.1);
  }
  CHECK(r.beds[0].T_out == Approx(T_max).epsilon(1e-9));
  CHECK(r.coolers.size() == 2);
}

TEST_CASE("an endothermic train: temperature falls and reheating is suggested", "[staging]") {
  AbSystem s;
  s.dH = +40e3;   // endothermic, invented (dehydrogenation-like)
  s.K_ref = 1.0;  // X_eq(600 K) = 0.5
  const double target = 0.40;
  const Case c =
      s.load("target: {conversion: 0.40}\nlimits: {T_max: 700 K, T_in_min: 450 K}", kOneBed);
  const StagingResult r = run_staging(c);
  CHECK_FALSE(r.exothermic);

  const double X_ad1 = s.X_ad(0, s.T_feed);
  REQUIRE(X_ad1 < target);
  CHECK(r.limited_by == StagingLimit::Equilibrium);
  CHECK(r.as_given[0].X_ad_eq.value() == Approx(X_ad1).epsilon(1e-8));
  CHECK(r.as_given[0].T_ad_eq.value() < s.T_feed);

  const auto X_beds = independent_beds(s, target, 0.9, std::nullopt);
  REQUIRE(X_beds.size() == 3);
  REQUIRE(r.target_reached);
  CHECK(r.beds_needed == 3);
  double X_in = 0;
  for (std::size_t k = 0; k < r.beds.size(); ++k) {
    const StagedBed& b = r.beds[k];
    INFO("bed " << b.id);
    CHECK(b.T_out < b.T_in);  // it cools as it reacts
    CHECK(b.T_min == Approx(b.T_out).epsilon(1e-8));
    CHECK(b.X_out == Approx(X_beds[k]).epsilon(1e-8));
    CHECK(b.volume == Approx(s.volume(X_in, s.T_feed, X_beds[k])).epsilon(1e-5));
    X_in = X_beds[k];
  }
  REQUIRE(r.coolers.size() == 2);
  for (const auto& h : r.coolers) {
    CHECK(h.id.front() == 'H');
    CHECK(h.duty > 0);  // heat added: reheating
    CHECK(h.T_out == Approx(s.T_feed).epsilon(1e-12));
  }
  CHECK_THAT(staged_answer_text(r), Catch::Contains("interstage heating is needed"));
  CHECK_THAT(format_staging_report(r), Catch::Contains("heater"));
}

TEST_CASE("a bed that only needs more catalyst is limited by size", "[staging]") {
  AbSystem s;
  s.K_ref = 50;
  // Half the volume the target needs (quadrature).
  const double V_needed = s.volume(0, s.T_feed, 0.5);
  const Case c = s.load("target: {conversion: 0.5}",
                        fmt::format("  - {{type: pfr, id: R1, volume: {} m3}}", 0.5 * V_needed));
  const StagingResult r = run_staging(c);
  REQUIRE(r.as_given_conversion < 0.5);
  CHECK(r.limited_by == StagingLimit::Size);
  CHECK(r.limiting_stage == "R1");
  CHECK(r.volume_needed.value() == Approx(V_needed).epsilon(1e-5));
  // One bed sized to the target is the staged answer: no cooling needed.
  CHECK(r.beds_needed == 1);
  CHECK(r.coolers.empty());
  CHECK_THAT(staged_answer_text(r), Catch::Contains("no interstage cooling is needed"));
}

TEST_CASE("a train that reaches its target within T_max is reachable", "[staging]") {
  AbSystem s;
  s.K_ref = 50;
  // The 20 m3 bed ends at X_ad (0.858) and T_feed + lambda X_ad (814.4 K).
  const double T_end = s.T_at(0, s.T_feed, s.X_ad(0, s.T_feed));
  REQUIRE(T_end < 850);
  const Case c = s.load("target: {conversion: 0.5}\nlimits: {T_max: 850 K}", kOneBed);
  const StagingResult r = run_staging(c);
  CHECK(r.reachable);
  CHECK(r.limited_by == StagingLimit::None);
  CHECK(std::string(limit_name(r.limited_by)).empty());
  CHECK(r.as_given_conversion >= 0.5);
  CHECK(r.beds_needed == 1);

  // With T_max = 800 K the same bed passes T_max after reaching the target:
  // not acceptable as built, and the message says a shorter bed would do.
  REQUIRE(T_end > 800);
  const StagingResult hot =
      run_staging(s.load("target: {conversion: 0.5}\nlimits: {T_max: 800 K}", kOneBed));
  CHECK_FALSE(hot.reachable);
  CHECK(hot.limited_by == StagingLimit::TMax);
  CHECK(hot.limit_point->X == Approx((800 - s.T_feed) / s.lambda()).epsilon(1e-8));
  CHECK_THAT(as_given_answer_text(hot), Catch::Contains("after the target"));
}

TEST_CASE("a sized stage whose own target lies beyond equilibrium is reported, not thrown",
          "[staging]") {
  const AbSystem s;  // X_ad from the feed ~ 0.50
  const Case c = s.load("target: {conversion: 0.7}",
                        "  - {type: pfr, id: R1, target: {conversion: 0.6}}\n"
                        "  - {type: exchanger, id: E1, T_out: 600 K}\n"
                        "  - {type: pfr, id: R2, volume: 5 m3}");
  const StagingResult r = run_staging(c);
  CHECK(r.limited_by == StagingLimit::Equilibrium);
  CHECK(r.limiting_stage == "R1");
  REQUIRE(r.as_given.size() == 3);
  CHECK_FALSE(r.as_given[1].ran);
  CHECK_FALSE(r.as_given[2].ran);
  CHECK_THAT(as_given_answer_text(r), Catch::Contains("its own target X = 0.6000"));
}

// The temperature of the highest rate at conversion X within [lo, hi], by
// golden-section search on the rate law written here (r(T) at fixed X is
// unimodal for one reversible exothermic reaction: Arrhenius rise against
// the falling K).
double T_opt_in(const AbSystem& s, double X, double lo, double hi) {
  const double g = (std::sqrt(5.0) - 1) / 2;
  double a = lo, b = hi;
  for (int i = 0; i < 200 && b - a > 1e-10; ++i) {
    const double c = b - g * (b - a), d = a + g * (b - a);
    (s.rate(X, c) > s.rate(X, d) ? b : a) = s.rate(X, c) > s.rate(X, d) ? d : c;
  }
  return 0.5 * (a + b);
}

TEST_CASE("the max-rate policy returns each bed to T_opt, taking back at least the floor",
          "[staging]") {
  const AbSystem s;
  const Case c =
      s.load("target: {conversion: 0.70}\nlimits: {T_max: 800 K, T_in_min: 560 K}", kOneBed);
  StagingOptions o;
  o.return_to = ReturnTo::MaxRate;
  const StagingResult r = run_staging(c, o);
  REQUIRE(r.beds.size() >= 2);
  CHECK(r.beds[0].T_in == s.T_feed);  // bed 1 is fed at the feed temperature
  // Near its approach point bed 1 lies a few kelvin above T_opt: it runs on
  // (the policy's floor) to where T_out - T_opt(X_out) is a fifth of its
  // rise, on the closed-form adiabatic line with the independent T_opt.
  CHECK(r.beds[0].ended_by == "floor");
  CHECK(r.beds[0].X_out > r.beds[0].X_in + 0.9 * (r.beds[0].X_ad_eq - r.beds[0].X_in));
  for (std::size_t k = 0; k < r.beds.size(); ++k) {
    const StagedBed& b = r.beds[k];
    INFO("bed " << b.id << " ends at " << b.ended_by);
    const double rise = b.T_out - b.T_in;
    if (b.ended_by == "floor")
      CHECK(b.T_out - T_opt_in(s, b.X_out, 560, 800) == Approx(0.2 * rise).margin(0.01));
    if (k + 1 == r.beds.size()) break;
    // The exchanger after it: to T_opt at that conversion, or further when
    // T_opt would take back less than 20 % of the bed's rise; every one
    // takes back at least 20 % (within the window).
    const double T_opt = T_opt_in(s, b.X_out, 560, 800);
    const double expected = std::clamp(std::min(T_opt, b.T_out - 0.2 * rise), 560.0, 800.0);
    CHECK(r.beds[k + 1].T_in == Approx(expected).margin(1e-4));
    CHECK(r.coolers[k].T_in - r.coolers[k].T_out >= 0.2 * rise - 1e-6);
    // Rate at the next inlet: the maximum where T_opt itself is returned to.
    const double T = r.beds[k + 1].T_in;
    if (std::abs(T - T_opt) < 1e-3) {
      CHECK(s.rate(b.X_out, T) >= s.rate(b.X_out, T - 1));
      CHECK(s.rate(b.X_out, T) >= s.rate(b.X_out, T + 1));
    }
  }
  CHECK_FALSE(r.conversion_limit.has_value());

  // Without the floor, the first exchanger takes back only a sliver.
  o.min_return = 0;
  const StagingResult bare = run_staging(c, o);
  REQUIRE(bare.coolers.size() >= 1);
  CHECK(bare.beds[0].ended_by == "approach");
  CHECK(bare.coolers[0].T_in - bare.coolers[0].T_out <
        0.2 * (bare.beds[0].T_out - bare.beds[0].T_in));
}

TEST_CASE("staging refuses a case without a target or without a reversible key reaction",
          "[staging]") {
  const AbSystem s;
  try {
    run_staging(s.load("", kOneBed));
    FAIL("no error");
  } catch (const InputError& e) {
    CHECK(e.where().file == "ab.yaml");
    CHECK_THAT(e.message(), Catch::Contains("no train-level target"));
  }
  std::string text = s.yaml("target: {conversion: 0.5}", kOneBed);
  const auto pos = text.find("equation: A <=> B");
  text.replace(pos, 17, "equation: A => B");
  text.replace(text.find("    equilibrium:"), text.find("feed:") - text.find("    equilibrium:"),
               "");
  const UnitParser units;
  const Case c = load_case_from_string(text, "irr.yaml", units);
  try {
    run_staging(c);
    FAIL("no error");
  } catch (const InputError& e) {
    CHECK(e.where().line == 8);  // the reaction's entry
    CHECK_THAT(e.message(), Catch::Contains("irreversible"));
  }
}

// ---- design warnings ------------------------------------------------------------

TEST_CASE("design warnings: adiabatic temperature rise against T_max", "[staging]") {
  AbSystem s;
  // Constant cp: dT_ad = -dH F_A0 / sum F cp = lambda = 250 K (closed form above).
  const Case hot = s.load("limits: {T_max: 800 K}", kOneBed);
  CHECK(adiabatic_temperature_change(hot).value() == Approx(s.lambda()).epsilon(1e-10));
  TrainResult none;
  const auto w = design_warnings(hot, none);
  REQUIRE(w.size() == 1);
  CHECK_THAT(w[0], Catch::Contains("adiabatic temperature rise"));
  CHECK_THAT(w[0], Catch::Contains("250.0 K"));
  CHECK_THAT(w[0], Catch::Contains("near X = 0.80"));  // (800 - 600) / 250
  CHECK(design_warnings(s.load("limits: {T_max: 900 K}", kOneBed), none).empty());
  CHECK(design_warnings(s.load("", kOneBed), none).empty());

  s.dH = +40e3;
  const Case cold = s.load("limits: {T_in_min: 400 K}", kOneBed);
  CHECK(adiabatic_temperature_change(cold).value() == Approx(s.lambda()).epsilon(1e-10));  // -250 K
  const auto wc = design_warnings(cold, none);
  REQUIRE(wc.size() == 1);
  CHECK_THAT(wc[0], Catch::Contains("temperature fall"));
}

TEST_CASE("design warnings: a bed whose last 10 % adds under 1 % conversion", "[staging]") {
  const AbSystem s;
  // 20 m3 runs deep into equilibrium (X_ad ~ 0.50); 1 m3 stops well short of it.
  const Case big = s.load("", kOneBed);
  const TrainResult rb = run_train(big);
  REQUIRE(rb.conversion == Approx(s.X_ad(0, s.T_feed)).epsilon(1e-4));
  // A tube without catalyst (no bulk density, a per-volume rate) wastes
  // volume, not catalyst; with a bulk density the same bed wastes catalyst.
  std::string tail;
  for (const auto& w : design_warnings(big, rb))
    if (w.find("stage R1: its last 10 % of volume") != std::string::npos) tail = w;
  CHECK_THAT(tail, Catch::EndsWith("so that volume is largely wasted"));
  CHECK_THAT(tail, !Catch::Contains("catalyst"));
  const Case packed = s.load("", "  - {type: pfr, id: R1, volume: 20 m3, bulk_density: 800 kg/m3}");
  const TrainResult rp = run_train(packed);
  tail.clear();
  for (const auto& w : design_warnings(packed, rp))
    if (w.find("stage R1: its last 10 % of volume") != std::string::npos) tail = w;
  CHECK_THAT(tail, Catch::Contains("1600 kg of catalyst"));
  CHECK_THAT(tail, Catch::EndsWith("so that catalyst is largely wasted"));

  // A bed sized by quadrature to X = 0.3, where the last 10 % of its
  // volume adds more than 0.01: X(0.9 V) < 0.29, i.e. V(0.29) > 0.9 V(0.3)
  // (also by quadrature).
  const double V = s.volume(0, s.T_feed, 0.3);
  REQUIRE(s.volume(0, s.T_feed, 0.29) > 0.9 * V);
  const Case small = s.load("", fmt::format("  - {{type: pfr, id: R1, volume: {} m3}}", V));
  const TrainResult rs = run_train(small);
  REQUIRE(rs.conversion == Approx(0.3).epsilon(1e-5));
  for (const auto& w : design_warnings(small, rs)) CHECK(w.find("last 10 %") == std::string::npos);
}

TEST_CASE("design warnings: space times outside the usual ranges", "[staging]") {
  // Common practice, no source: stirred tanks about 10 min to 4 h, tubular
  // reactors about 0.5 s to 1 h. Hand-built results (no solver).
  const AbSystem s;
  const Case c = s.load("", kOneBed);
  auto stage = [](StageKind kind, double tau) {
    StageResult r;
    r.id = "S";
    r.kind = kind;
    r.space_time = tau;
    return r;
  };
  auto warnings_for = [&](StageKind kind, double tau) {
    TrainResult t;
    t.stages.push_back(stage(kind, tau));
    return design_warnings(c, t);
  };
  CHECK(warnings_for(StageKind::Cstr, 1800).empty());
  CHECK(warnings_for(StageKind::Pfr, 10).empty());
  const auto tank_short = warnings_for(StageKind::Cstr, 300);
  REQUIRE(tank_short.size() == 1);
  CHECK_THAT(tank_short[0], Catch::Contains("5 min is below what stirred tanks usually have"));
  const auto tank_long = warnings_for(StageKind::Cstr, 5 * 3600.0);
  REQUIRE(tank_long.size() == 1);
  CHECK_THAT(tank_long[0], Catch::Contains("5 h is above"));
  const auto tube_short = warnings_for(StageKind::Pfr, 0.2);
  REQUIRE(tube_short.size() == 1);
  CHECK_THAT(tube_short[0], Catch::Contains("0.2 s is below what empty tubular reactors"));
  CHECK(warnings_for(StageKind::Pfr, 2 * 3600.0).size() == 1);
  // A catalyst bed is judged by its space velocities: no space-time warning.
  TrainResult bed;
  bed.stages.push_back(stage(StageKind::Pfr, 0.2));
  bed.stages.back().bulk_density = 800.0;
  CHECK(design_warnings(c, bed).empty());
}

// ---- the command line --------------------------------------------------------------

TEST_CASE("staging command: answer, exit code and JSON layout", "[staging][cli]") {
  const auto dir = std::filesystem::temp_directory_path() / "rxtrain_staging_cli";
  std::filesystem::remove_all(dir);
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-oxidation-staging.yaml";
  const auto r =
      test::run_rxtrain("staging '" + demo + "' --json '" + (dir / "s.json").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK_THAT(r.out, Catch::Contains("Can the train as given reach the target?"));
  CHECK_THAT(r.out, Catch::Contains("intercoolers"));
  CHECK_THAT(r.out, Catch::Contains("licensed engineers"));
  CHECK(r.out.find("nan") == std::string::npos);
  const auto j = nlohmann::json::parse(test::slurp(dir / "s.json"));
  CHECK(j["reachable"] == false);
  CHECK(j["limited_by"] == "equilibrium");
  REQUIRE(j["beds_needed"].is_number_integer());
  const int n = j["beds_needed"];
  CHECK(n >= 2);
  CHECK(
      j["policy"] ==
      nlohmann::json(
          {{"approach", 0.9}, {"return_to", "inlet"}, {"min_return", nullptr}, {"max_beds", 10}}));
  REQUIRE(j["beds"].size() == static_cast<std::size_t>(n));
  REQUIRE(j["coolers"].size() == static_cast<std::size_t>(n - 1));
  for (const auto& b : j["beds"])
    for (const char* k : {"T_in", "T_out", "X_in", "X_out", "volume", "catalyst_mass", "T_peak"}) {
      INFO(k);
      CHECK(b[k].is_number());
    }
  for (const auto& x : j["coolers"])
    for (const char* k : {"T_in", "T_out", "duty"}) CHECK(x[k].is_number());
  // Beds chain: each starts at the conversion the one before ends at.
  for (std::size_t k = 1; k < j["beds"].size(); ++k)
    CHECK(j["beds"][k]["X_in"].get<double>() ==
          Approx(j["beds"][k - 1]["X_out"].get<double>()).margin(1e-12));
  CHECK(j["beds"].back()["X_out"].get<double>() >= j["target"].get<double>() - 1e-8);
  CHECK(j["warnings"].is_array());
  // The bed as given passes T_max (624.28 °C against 620 °C): said per stage.
  const auto& lim = j["as_given"][0]["limit"];
  REQUIRE(lim["findings"].size() == 1);
  CHECK(lim["findings"][0]["kind"] == "over");
  CHECK(lim["over_limit"].get<double>() == Approx(4.28).margin(0.005));
  CHECK_THAT(r.out, Catch::Contains("stage R1 passes T_max: its peak, 624.28 °C"));
  for (const auto& b : j["beds"]) CHECK(b["limit"]["over_limit"].get<double>() == 0.0);
  std::filesystem::remove_all(dir);

  const auto opt = test::run_rxtrain("staging '" + demo + "' --approach 0.8 --return-to max-rate");
  CHECK(opt.exit_code == 0);
  CHECK_THAT(opt.out, Catch::Contains("--approach 0.8, --return-to max-rate, --min-return 0.2"));
}

TEST_CASE("staging --return-to max-rate: no exchanger takes back less than the floor",
          "[staging][cli]") {
  // The SO2 demo: at 90 % approach bed 1 ends 6.5 K above the maximum-rate
  // temperature, and a 6.5 K cooler after a 184 K rise is one nobody
  // builds. The floor (20 % of the bed's rise; common practice, no source)
  // runs bed 1 on; every exchanger then takes back at least a fifth.
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-oxidation-staging.yaml";
  const auto dir = std::filesystem::temp_directory_path() / "rxtrain_staging_floor";
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  const auto r = test::run_rxtrain("staging '" + demo + "' --return-to max-rate --json '" +
                                   (dir / "s.json").string() + "'");
  REQUIRE(r.exit_code == 0);
  const auto j = nlohmann::json::parse(test::slurp(dir / "s.json"));
  CHECK(j["policy"]["return_to"] == "max-rate");
  CHECK(j["policy"]["min_return"] == 0.2);
  REQUIRE(j["coolers"].size() + 1 == j["beds"].size());
  REQUIRE(j["coolers"].size() >= 1);
  for (std::size_t k = 0; k < j["coolers"].size(); ++k) {
    const auto& b = j["beds"][k];
    const auto& x = j["coolers"][k];
    const double rise = b["T_out"].get<double>() - b["T_in"].get<double>();
    const double taken = x["T_in"].get<double>() - x["T_out"].get<double>();
    INFO("after " << b["id"].get<std::string>() << ": rise " << rise << " K, cooler " << taken
                  << " K");
    CHECK(taken >= 0.2 * rise - 1e-6);
  }

  // The old value name still works for a release and says it was renamed;
  // help shows only the new one.
  const auto old = test::run_rxtrain("staging '" + demo + "' --return-to optimal");
  CHECK(old.exit_code == 0);
  CHECK_THAT(old.err, Catch::Contains("renamed --return-to max-rate"));
  CHECK_THAT(old.out, Catch::Contains("--return-to max-rate"));
  const auto help = test::run_rxtrain("staging --help");
  CHECK_THAT(help.out, Catch::Contains("max-rate"));
  CHECK_THAT(help.out, !Catch::Contains("optimal"));
  CHECK(test::run_rxtrain("staging '" + demo + "' --min-return 1").exit_code == 2);
  std::filesystem::remove_all(dir);
}

TEST_CASE("staging command: input errors exit 2 with a located message", "[staging][cli]") {
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-oxidation-staging.yaml";
  CHECK(test::run_rxtrain("staging '" + demo + "' --approach 1.5").exit_code == 2);
  CHECK(test::run_rxtrain("staging '" + demo + "' --approach 0").exit_code == 2);
  CHECK(test::run_rxtrain("staging '" + demo + "' --return-to hot").exit_code == 2);

  const std::string no_target =
      std::string(RXTRAIN_SOURCE_DIR) + "/cases/isomerization-two-bed.yaml";
  const auto r = test::run_rxtrain("staging '" + no_target + "'");
  CHECK(r.exit_code == 2);
  CHECK_THAT(r.err, Catch::Contains(no_target + ": error: the case has no train-level target"));

  AbSystem s;
  std::string text = s.yaml("target: {conversion: 0.5}", kOneBed);
  text.replace(text.find("equation: A <=> B"), 17, "equation: A => B");
  text.replace(text.find("    equilibrium:"), text.find("feed:") - text.find("    equilibrium:"),
               "");
  const auto file = write_temp("rxtrain_staging_irreversible.yaml", text);
  const auto irr = test::run_rxtrain("staging '" + file.string() + "'");
  CHECK(irr.exit_code == 2);
  CHECK_THAT(irr.err, Catch::Contains(file.string() + ":8:"));
  CHECK_THAT(irr.err, Catch::Contains("irreversible"));
  std::filesystem::remove(file);
}

TEST_CASE("the staging answer's words are phrased by the report from the numbers", "[staging]") {
  // The sentences the study wrote itself before report/ phrased them
  // (kept word for word; the golden outputs hold the other kinds).
  StagingResult r;
  r.target = 0.9;
  r.exothermic = true;
  r.limits.T_max = 743.15;  // 470 °C
  r.max_beds = 4;
  AsGivenStage a;
  a.id = "R3";
  a.ran = true;
  a.X_out = 0.8123;
  StageNote n;
  n.kind = StageNoteKind::EnlargedPassesLimit;
  n.at = {0.85, 12.5, 743.15, true};
  a.notes = {n};
  r.as_given = {a};
  r.limited_by = StagingLimit::TMax;
  r.limiting_stage = "R3";
  CHECK(as_given_answer_text(r) ==
        "stage R3 reaches X = 0.8123; enlarged, it would pass T_max 470.00 °C at X = 0.8500, "
        "V = 12.5 m3 from its inlet, before the target");
  n.kind = StageNoteKind::PassesLimit;
  n.before_target = false;
  r.as_given[0].notes = {n};
  CHECK(stage_note_text(r, r.as_given[0]) ==
        "passes T_max = 470.00 °C at X = 0.8500, V = 12.5 m3 from its inlet, after the target (a "
        "bed ending where X reaches 0.9000 would stay within it)");

  r.staged_conversion = 0.7;
  r.beds.resize(2);
  r.stop = {StagedStopKind::NoProgress, 3, 673.15, 0.7};
  CHECK(staged_answer_text(r) ==
        "the target X = 0.9000 is out of reach with up to 4 beds: bed 3 cannot progress: fed at "
        "400.00 °C and X = 0.7000, the stream is already at equilibrium; the beds before reach "
        "X = 0.7000");
  r.beds.clear();
  r.stop = {StagedStopKind::EndsAtInlet, 1, 743.15, 0.0};
  CHECK(staged_answer_text(r) ==
        "the target X = 0.9000 is out of reach with up to 4 beds: bed 1 ends at its inlet (T_max "
        "470.00 °C)");
}

// A train-level target that the train misses is said by `run` (its design
// warnings), whether a conversion or an outlet purity; one it meets is not.
TEST_CASE("design warnings: the train's target, met or missed", "[staging]") {
  AbSystem s;
  TrainResult r;
  r.outlet = Stream{s.T_feed, s.P, {0.4 * s.F_A0, 0.6 * s.F_A0, s.F_I0}};
  r.conversion = 0.6;
  const auto missed = design_warnings(s.load("target: {conversion: 0.70}", kOneBed), r);
  REQUIRE(missed.size() == 1);
  CHECK_THAT(missed[0], Catch::Contains("reaches X = 0.6000 of A at its outlet, short of its "
                                        "target 0.7000"));
  CHECK(design_warnings(s.load("target: {conversion: 0.60}", kOneBed), r).empty());
  // x_A at the outlet = 0.4 F_A0 / (F_A0 + F_I0).
  const double x_A = 0.4 * s.F_A0 / (s.F_A0 + s.F_I0);
  const auto purity = [&](double x) {
    return design_warnings(s.load(fmt::format("target: {{outlet: {{A: {}}}}}", x), kOneBed), r);
  };
  const auto over = purity(0.5 * x_A);
  REQUIRE(over.size() == 1);
  CHECK_THAT(over[0], Catch::Contains("the outlet of the train as the case gives it holds"));
  CHECK(purity(1.01 * x_A).empty());
  // The staged studies size to a conversion: an outlet target is refused.
  try {
    run_staging(s.load(fmt::format("target: {{outlet: {{A: {}}}}}", 0.5 * x_A), kOneBed));
    FAIL("staging took an outlet target");
  } catch (const InputError& e) {
    CHECK_THAT(e.message(), Catch::Contains("the train's target is an outlet purity"));
  }
}
