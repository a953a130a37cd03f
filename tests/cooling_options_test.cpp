// The cooling options side by side (cooling_options.hpp), against an
// independent calculation written here on the invented A <=> B system of
// staging_test.cpp: equal constant heat capacities, no mole change, an
// inert, a van 't Hoff K with constant dH. Then
//   adiabatic line:  T = T_in + lambda (X - X_in), lambda = -dH F_A0 / sum F_i cp_i,
//                    the same on any scale of the flow (steady-flow first law,
//                    constant cp);
//   cold shot:       a shot of fresh feed at T_q, a times the flow already fed,
//                    brings a stream at T_out back to T_in when
//                    C (T_out - T_in) = a C (T_in - T_q) (the enthalpy balance
//                    of adiabatic mixing with constant cp), and dilutes the
//                    conversion to X / (1 + a);
//   bed volumes:     V = F_A,fed integral dX / r(X, T(X)) by GSL QAGS;
//   a cooled tube:   dX/dV = r / F_A0, C dT/dV = -dH r - U (4/d) (T - T_c),
//                    integrated by GSL's rk8pd.
// Every kinetic and thermal value is invented test data.
#include "rxtrain/studies/cooling_options.hpp"

#include <fmt/format.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "run_command.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/report/cooling_options_report.hpp"
#include "rxtrain/report/text_format.hpp"

using namespace rxtrain;
using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;

namespace {

constexpr double R = 8.31446261815324;  // J/(mol K), exact (2019 SI; reference-data.md §6)

struct AbSystem {
  double K_ref = 4.0, T_ref = 600.0, dH = -40e3;  // K at T_ref (K), J/mol
  double T_feed = 600.0, P = 2e5;                 // K, Pa
  double F_A0 = 10.0, F_I0 = 40.0;                // mol/s
  double cp = 40.0, cp_I = 30.0;                  // J/(mol K): A and B, the inert
  double k_ref = 0.5, Ea = 80e3;                  // 1/s at T_ref, J/mol

  double C() const { return F_A0 * cp + F_I0 * cp_I; }
  double lambda() const { return -dH * F_A0 / C(); }
  double K(double T) const { return K_ref * std::exp(-dH / R * (1 / T - 1 / T_ref)); }
  double X_eq(double T) const { return K(T) / (1 + K(T)); }
  // Where the line from (X_in, T_in) meets equilibrium, by bisection.
  double X_ad(double X_in, double T_in) const {
    double lo = X_in, hi = 1.0;
    for (int i = 0; i < 200; ++i) {
      const double m = 0.5 * (lo + hi);
      (m - X_eq(T_in + lambda() * (m - X_in)) > 0 ? hi : lo) = m;
    }
    return 0.5 * (lo + hi);
  }
  // mol/(m3 s) at the feed's composition on the key fed (any scale).
  double rate(double X, double T) const {
    const double k = k_ref * std::exp(-Ea / R * (1 / T - 1 / T_ref));
    const double C_A = F_A0 * (1 - X) * P / ((F_A0 + F_I0) * R * T);
    return k * C_A * (1 - X / ((1 - X) * K(T)));
  }
  // F_A0 integral dX / r along the adiabatic line from (X_in, T_feed).
  double volume(double X_in, double X_out) const {
    struct Ctx {
      const AbSystem* s;
      double X_in;
    } ctx{this, X_in};
    gsl_function f;
    f.function = [](double X, void* p) {
      const auto* c = static_cast<const Ctx*>(p);
      return c->s->F_A0 / c->s->rate(X, c->s->T_feed + c->s->lambda() * (X - c->X_in));
    };
    f.params = &ctx;
    std::unique_ptr<gsl_integration_workspace, void (*)(gsl_integration_workspace*)> w(
        gsl_integration_workspace_alloc(2000), gsl_integration_workspace_free);
    double result = 0, error = 0;
    REQUIRE(gsl_integration_qags(&f, X_in, X_out, 0.0, 1e-11, 2000, w.get(), &result, &error) ==
            GSL_SUCCESS);
    return result;
  }
  Case load(double target) const {
    const std::string text = fmt::format(
        R"(title: A <=> B cooling options test (invented data)
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
target: {{conversion: {}}}
limits: {{T_max: 640 K, T_in_min: 570 K}}
train:
  - {{type: pfr, id: R1, volume: 20 m3}}
)",
        cp, cp, cp_I, k_ref, Ea, T_ref, dH, K_ref, T_ref, dH, T_feed, P, F_A0, F_I0, target);
    const UnitParser units;
    return load_case_from_string(text, "ab.yaml", units);
  }
};

constexpr double kTMax = 640, kTq = 400;

const CoolingOption& option(const CoolingOptionsResult& r, CoolingKind k) {
  return *std::find_if(r.options.begin(), r.options.end(),
                       [&](const CoolingOption& o) { return o.kind == k; });
}

CoolingOptionsOptions ab_options() {
  CoolingOptionsOptions o;
  o.quench_T = kTq;
  o.tubes = {1000, 0.05, 200.0};
  return o;
}

}  // namespace

TEST_CASE("the quench option's shares and beds agree with the enthalpy balance done by hand",
          "[cooling-options]") {
  const AbSystem s;
  const double target = 0.6;
  const CoolingOptionsResult r = run_cooling_options(s.load(target), ab_options());
  const CoolingOption& q = option(r, CoolingKind::Quench);
  // The independent walk (scale: bed 1's flow = the feed): each bed from
  // T_feed ends at 0.9 of the way to X_ad, at T_max, or at the target;
  // then the shot a = w (T_out - T_feed) / (T_feed - T_q) of the feed
  // (w: the flow fed so far) dilutes X to X w / (w + a).
  std::vector<double> X_in, X_out, shots;
  double X = 0, w = 1;
  for (int k = 0; k < 10; ++k) {
    X_in.push_back(X);
    double X_end = X + 0.9 * (s.X_ad(X, s.T_feed) - X);
    X_end = std::min({X_end, X + (kTMax - s.T_feed) / s.lambda(), target});
    X_out.push_back(X_end);
    if (X_end >= target - 1e-12) break;
    const double a = w * s.lambda() * (X_end - X) / (s.T_feed - kTq);
    shots.push_back(a);
    X = X_end * w / (w + a);
    w += a;
  }
  REQUIRE(X_out.back() == Approx(target).margin(1e-12));
  const int beds = static_cast<int>(X_out.size());
  REQUIRE(beds >= 3);  // a converter with at least two shots
  REQUIRE(q.feasible);
  REQUIRE(q.beds);
  CHECK(*q.beds == beds);
  REQUIRE(q.shares.size() == shots.size());
  double total = 1;
  for (double a : shots) total += a;
  for (std::size_t k = 0; k < shots.size(); ++k) {
    INFO("Q" << k + 1);
    CHECK(q.shares[k] == Approx(shots[k] / total).epsilon(1e-7));
  }
  // Each mixed stream returns to bed 1's inlet temperature, and each bed's
  // volume is the quadrature's on its share of the flow.
  double fed = 1 / total;  // the flow fed so far, a fraction of the feed
  int bed = 0;
  for (const auto& st : q.train.stages) {
    if (st.kind == StageKind::Quench) {
      CHECK(st.outlet.T == Approx(s.T_feed).epsilon(1e-9));
      fed += q.shares[bed - 1];
      continue;
    }
    INFO(st.id);
    REQUIRE(st.volume);
    CHECK(*st.volume == Approx(fed * s.volume(X_in[bed], X_out[bed])).epsilon(1e-6));
    ++bed;
  }
  CHECK(fed == Approx(1.0).epsilon(1e-12));
  REQUIRE(q.conversion);
  CHECK(*q.conversion == Approx(target).margin(1e-6));
  // What the shots take up: each warmed from T_q to T_feed.
  REQUIRE(q.heat_removed);
  CHECK(*q.heat_removed == Approx((1 - 1 / total) * s.C() * (s.T_feed - kTq)).epsilon(1e-9));
}

TEST_CASE("a target beyond what cold shots allow: the quench option says the most it reaches",
          "[cooling-options]") {
  const AbSystem s;
  const CoolingOptionsResult r = run_cooling_options(s.load(0.75), ab_options());
  const CoolingOption& q = option(r, CoolingKind::Quench);
  CHECK_FALSE(q.feasible);
  CHECK(q.why == CoolingShortfall::TargetMissed);
  REQUIRE(q.conversion);
  CHECK(*q.conversion < 0.75);
  CHECK_THAT(cooling_reason_text(r, q), Catch::Contains("out of reach of a quench converter") &&
                                            Catch::Contains(conversion_text(*q.conversion)));
  // The intercooled beds, each fed undiluted at T_feed, do reach it.
  CHECK(option(r, CoolingKind::Intercooled).feasible);
  CHECK(r.options.back().kind == CoolingKind::Quench);  // infeasible after the feasible
}

TEST_CASE("the cooled option's coolant temperature is the least-catalyst one, checked with GSL",
          "[cooling-options]") {
  GslNoAbort no_abort;
  const AbSystem s;
  const double target = 0.6, U = 200, d = 0.05;
  const CoolingOptionsResult r = run_cooling_options(s.load(target), ab_options());
  const CoolingOption& x = option(r, CoolingKind::Cooled);
  INFO(format_cooling_options(r));
  REQUIRE(x.feasible);
  REQUIRE(x.coolant_T);
  REQUIRE(x.volume);
  const double Tc = *x.coolant_T, V = *x.volume;
  // X and T along the tube by GSL, to V: the conversion there and the peak.
  auto run = [&](double T_cool, double V_end) {
    GslOde ode(2, [&](double, const double* y, double* dy) {
      const double rr = s.rate(y[0], y[1]);
      dy[0] = rr / s.F_A0;
      dy[1] = (-s.dH * rr - U * 4 / d * (y[1] - T_cool)) / s.C();
    });
    std::vector<double> y{0.0, s.T_feed};
    double peak = s.T_feed;
    const int n = 4000;
    for (int k = 0; k < n; ++k) {
      ode.advance(V_end * k / n, V_end * (k + 1) / n, y);
      peak = std::max(peak, y[1]);
    }
    return std::pair{y[0], peak};
  };
  const auto [X_end, peak] = run(Tc, V);
  CHECK(X_end == Approx(target).margin(1e-6));
  REQUIRE(x.T_peak);
  CHECK(*x.T_peak == Approx(peak).epsilon(1e-5));  // the grid of 4000 points resolves the peak
  CHECK(peak < kTMax);
  CHECK(*x.margin_to_T_max == Approx(kTMax - *x.T_peak).epsilon(1e-12));
  // Least catalyst: with the same volume a coolant 0.5 K colder or hotter
  // either falls short of the target or takes the peak to T_max.
  for (const double dT : {-0.5, 0.5}) {
    INFO("coolant " << Tc + dT << " K");
    const auto [X_d, peak_d] = run(Tc + dT, V);
    CHECK((X_d < target || peak_d >= kTMax - 0.01));
  }
  // Heat removed: the wall's, the process enthalpy balance of the tube.
  REQUIRE(x.heat_removed);
  const double T_out = x.train.outlet.T;
  CHECK(*x.heat_removed ==
        Approx(-s.dH * s.F_A0 * target - s.C() * (T_out - s.T_feed)).epsilon(1e-6));
  REQUIRE(x.area);
  CHECK(*x.area == Approx(V * 4 / d).epsilon(1e-12));
}

TEST_CASE("the options' JSON has the issue's shape, best feasible first", "[cooling-options]") {
  const AbSystem s;
  const CoolingOptionsResult r = run_cooling_options(s.load(0.6), ab_options());
  const nlohmann::json j = cooling_options_json(r);
  REQUIRE(j["options"].size() == 3);
  double last = 0;
  bool infeasible_seen = false;
  for (const auto& o : j["options"]) {
    for (const char* k :
         {"kind", "feasible", "reason", "beds", "tubes", "catalyst_mass", "heat_removed", "area",
          "T_peak", "margin_to_T_max", "coolant_T", "conversion"})
      CHECK(o.contains(k));
    if (o["feasible"].get<bool>()) {
      CHECK_FALSE(infeasible_seen);
      CHECK(o["reason"].is_null());
      // No bulk density here: ranked on the volume.
      CHECK(o["volume"].get<double>() >= last);
      last = o["volume"].get<double>();
    } else {
      infeasible_seen = true;
      CHECK(o["reason"].is_string());
    }
  }
}

TEST_CASE("options skipped for want of their inputs say why", "[cooling-options]") {
  const AbSystem s;
  CoolingOptionsOptions o;  // no quench T, no tubes (the case's reactor has none)
  const CoolingOptionsResult r = run_cooling_options(s.load(0.6), o);
  const CoolingOption& q = option(r, CoolingKind::Quench);
  const CoolingOption& x = option(r, CoolingKind::Cooled);
  CHECK(q.skipped);
  CHECK(q.why == CoolingShortfall::NoQuenchT);
  CHECK_THAT(cooling_reason_text(r, q), Catch::Contains("--quench-T"));
  CHECK(x.skipped);
  CHECK(x.why == CoolingShortfall::NoTubes);
  CHECK_THAT(cooling_reason_text(r, x), Catch::Contains("--tubes"));
  CHECK(r.options.front().kind == CoolingKind::Intercooled);
  o.quench_T = 650;  // hotter than the feed
  CHECK(option(run_cooling_options(s.load(0.6), o), CoolingKind::Quench).why ==
        CoolingShortfall::QuenchNotColder);
}

TEST_CASE("the intercooled option's coolers are sized with the U and utility the case gives",
          "[cooling-options]") {
  // Counter-flow LMTD (Incropera et al., Fundamentals of Heat and Mass
  // Transfer, ch. 11, eq. 11.15): dT_a = T_in - T_u,out, dT_b = T_out -
  // T_u,in, LMTD = (dT_a - dT_b) / ln(dT_a / dT_b); area = |duty| / (U LMTD).
  const AbSystem s;
  Case c = s.load(0.6);
  ExchangerSpec x;
  x.id = "E9";
  x.T_out = 590;
  x.U = 80;
  x.utility = UtilitySpec{500, 560, 4180.0};
  x.where = std::get<ReactorSpec>(c.train[0]).where;
  c.train.push_back(x);
  const CoolingOptionsResult r = run_cooling_options(c, ab_options());
  const CoolingOption& o = option(r, CoolingKind::Intercooled);
  CHECK(o.sized_like == "E9");
  REQUIRE(o.area);
  double area = 0;
  int coolers = 0;
  bool after_bed = false;  // the feed's exchanger before bed 1 is no cooler
  for (const auto& st : o.train.stages) {
    after_bed = after_bed || is_reactor(st.kind);
    if (st.kind != StageKind::Exchanger || !after_bed) continue;
    const double a = st.inlet.T - 560, b = st.outlet.T - 500;
    area += std::abs(st.duty) / (80 * (a - b) / std::log(a / b));
    ++coolers;
  }
  CHECK(coolers >= 2);
  CHECK(*o.area == Approx(area).epsilon(1e-12));
  // A utility leaving hotter than the coolers' inlet (T_max at most)
  // crosses them, though not E9 (725 K to 560 K): no area, and why.
  auto& e9 = std::get<ExchangerSpec>(c.train.back());
  e9.T_out = 560;
  e9.utility = UtilitySpec{550, 650, 4180.0};
  const CoolingOptionsResult crossed = run_cooling_options(c, ab_options());
  const CoolingOption& oc = option(crossed, CoolingKind::Intercooled);
  CHECK(oc.utility_cross);
  CHECK_FALSE(oc.area);
  CHECK_THAT(format_cooling_options(crossed), Catch::Contains("crosses a cooler's temperatures"));
}

TEST_CASE("the intercooled row is the optimum layout for staging's bed count",
          "[cooling-options]") {
  // Each bed of the row against its design integral along its own
  // adiabatic line, integrated here with GSL QAGS; across each cooler the
  // equal-rate condition of the optimal intercooled reactor (Konoki 1956;
  // Aris, The Optimal Design of Chemical Reactors, 1961) unless the bed
  // before it is held at T_max - 0.01 K.
  const AbSystem s;
  const CoolingOptionsResult r = run_cooling_options(s.load(0.6), ab_options());
  const CoolingOption& o = option(r, CoolingKind::Intercooled);
  REQUIRE(o.feasible);
  REQUIRE(o.optimized);
  REQUIRE(o.staging_total);
  CHECK(*o.volume < *o.staging_total);
  // The peak within T_max - 0.01 K, to 1 mK: the row is the ODE run of the
  // optimizer's quadrature layout, which agree within 1e-5 in X (2.5 mK on
  // this 250 K-per-unit-X adiabatic line).
  CHECK(*o.T_peak <= kTMax - 0.01 + 1e-3);
  CHECK(*o.conversion == Approx(0.6).margin(1e-6));
  std::vector<const StageResult*> beds;
  for (const auto& st : o.train.stages)
    if (is_reactor(st.kind)) beds.push_back(&st);
  REQUIRE(static_cast<int>(beds.size()) == *o.beds);
  double total = 0;
  for (std::size_t n = 0; n < beds.size(); ++n) {
    const StageResult& b = *beds[n];
    const double X_in = 1 - b.inlet.F[0] / s.F_A0, X_out = 1 - b.outlet.F[0] / s.F_A0;
    struct Ctx {
      const AbSystem* s;
      double X_in, T_in;
    } ctx{&s, X_in, b.inlet.T};
    gsl_function f;
    f.function = [](double X, void* p) {
      const auto* c = static_cast<const Ctx*>(p);
      return c->s->F_A0 / c->s->rate(X, c->T_in + c->s->lambda() * (X - c->X_in));
    };
    f.params = &ctx;
    std::unique_ptr<gsl_integration_workspace, void (*)(gsl_integration_workspace*)> w(
        gsl_integration_workspace_alloc(2000), gsl_integration_workspace_free);
    double V = 0, err = 0;
    REQUIRE(gsl_integration_qags(&f, X_in, X_out, 0.0, 1e-10, 2000, w.get(), &V, &err) ==
            GSL_SUCCESS);
    INFO("bed " << n + 1);
    CHECK(*b.volume == Approx(V).epsilon(1e-6));
    total += V;
    if (n + 1 < beds.size() && b.outlet.T < kTMax - 0.02) {
      const double before = s.rate(X_out, b.outlet.T), after = s.rate(X_out, beds[n + 1]->inlet.T);
      CHECK(after == Approx(before).epsilon(1e-4));
    }
  }
  CHECK(*o.volume == Approx(total).epsilon(1e-6));
}

TEST_CASE("a cooled reactor whose peak passes T_max at every coolant temperature is infeasible",
          "[cooling-options]") {
  // U = 20 W/m2/K: the wall takes U 4/d (T - T_c) = 1.6 kW/(m3 K) while the
  // reaction releases about 160 kW/m3 at the inlet, so the gas heats by
  // about 100 K per m3 against a removal of 1 K per m3 and kelvin: the
  // 40 K window to T_max is passed whatever the coolant.
  const AbSystem s;
  CoolingOptionsOptions o = ab_options();
  o.tubes.U = 20;
  const CoolingOptionsResult r = run_cooling_options(s.load(0.6), o);
  const CoolingOption& x = option(r, CoolingKind::Cooled);
  CHECK_FALSE(x.feasible);
  CHECK_FALSE(x.skipped);
  CHECK(x.why == CoolingShortfall::PeakAboveTMax);
  CHECK(x.train.stages.empty());
  CHECK(x.trials == o.coolant_scan_points);
  CHECK_THAT(cooling_reason_text(r, x),
             Catch::Contains("that reaches the target takes the tubes' peak to T_max") &&
                 Catch::Contains("from 296.85 to 366.85 °C"));
  const nlohmann::json j = cooling_options_json(r);
  CHECK(j["options"].back()["kind"] == "cooled");
  CHECK(j["options"].back()["coolant_T"].is_null());
}

TEST_CASE("staging refuses the options' flags without --options, naming the flag",
          "[cooling-options]") {
  const std::string so2 = std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-oxidation-staging.yaml";
  const auto r = test::run_rxtrain("staging '" + so2 + "' --U 220W/m2/K");
  CHECK(r.exit_code == 2);
  CHECK_THAT(r.err, Catch::StartsWith("--U: error:") && Catch::Contains("go with --options"));
  const auto t = test::run_rxtrain("staging '" + so2 + "' --options --tubes 38mm");
  CHECK(t.exit_code == 2);
  CHECK_THAT(t.err, Catch::Contains("expected COUNTxDIAMETER"));
  CHECK(t.out.empty());
  const auto m = test::run_rxtrain("staging '" + so2 + "' --options --return-to max-rate");
  CHECK(m.exit_code == 2);
  CHECK_THAT(m.err, Catch::StartsWith("--return-to: error:"));
}
