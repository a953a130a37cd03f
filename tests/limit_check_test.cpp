// The check of every stage against the case's temperature limits
// (limit_check.hpp): on hand-built profiles against the closed-form linear
// interpolation of the crossing; on a solved adiabatic first-order bed
// against the crossing found independently (adiabatic line and GSL QAGS
// quadrature of the plug-flow design equation); and on the command line,
// where `run` and `sweep` said nothing of a bed passing T_max.
#include "rxtrain/stages/limit_check.hpp"

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "hot_bed.hpp"
#include "run_command.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/sweep/run_point.hpp"
#include "rxtrain/sweep/summary.hpp"

using namespace rxtrain;

namespace {

constexpr double R = 8.31446261815324;  // J/(mol K), exact (2019 SI; reference-data.md §6)

// A tubular stage with the profile (V, T) given, inlet at the first point.
StageResult tube(const std::string& id, std::vector<std::pair<double, double>> VT) {
  StageResult r;
  r.id = id;
  r.kind = StageKind::Pfr;
  r.inlet.T = VT.front().second;
  r.outlet.T = VT.back().second;
  r.T_max = r.T_min = r.inlet.T;
  for (const auto& [V, T] : VT) {
    r.profile.push_back({V, T, 0.0, {}, {}});
    r.T_max = std::max(r.T_max, T);
    r.T_min = std::min(r.T_min, T);
  }
  r.volume = VT.back().first;
  return r;
}

TemperatureLimits limits(std::optional<double> T_max, std::optional<double> T_in_min) {
  TemperatureLimits l;
  l.T_max = T_max;
  l.T_in_min = T_in_min;
  return l;
}

Case load(const std::string& text) {
  const UnitParser units;
  return load_case_from_string(text, "hot.yaml", units);
}

// V at which the hot bed reaches T_lim, independently: X* from the
// adiabatic line, then V* = F_A0 integral_0^X* dX / (k(T) C_A), C_A = F_A0
// (1 - X) P / (F_t R T) (no change of moles), by GSL QAGS.
double hot_bed_crossing(double T_lim) {
  using H = test::HotBed;
  const double X_star = (T_lim - H::T0) / H::lambda;
  gsl_function f;
  f.function = [](double X, void*) {
    const double T = H::T0 + H::lambda * X;
    const double k = H::k_ref * std::exp(-H::Ea / R * (1 / T - 1 / H::T0));
    const double C_A = H::F_A0 * (1 - X) * H::P / ((H::F_A0 + H::F_I0) * R * T);
    return H::F_A0 / (k * C_A);
  };
  f.params = nullptr;
  std::unique_ptr<gsl_integration_workspace, void (*)(gsl_integration_workspace*)> w(
      gsl_integration_workspace_alloc(1000), gsl_integration_workspace_free);
  double V = 0, err = 0;
  REQUIRE(gsl_integration_qags(&f, 0.0, X_star, 0.0, 1e-12, 1000, w.get(), &V, &err) ==
          GSL_SUCCESS);
  return V;
}

}  // namespace

TEST_CASE("a peak past T_max is found where the profile first crosses it", "[limits]") {
  // Closed-form linear interpolation: T goes 640 -> 680 K between V = 1
  // and 2 m3, so it reaches 660 K at V = 1 + (660 - 640) / (680 - 640) = 1.5.
  std::vector<StageResult> s{tube("R1", {{0, 600}, {1, 640}, {2, 680}, {3, 700}})};
  s[0].bulk_density = 500;
  const LimitCheck lc = check_temperature_limits(limits(660.0, 550.0), s);
  REQUIRE(lc.findings.size() == 1);
  const LimitFinding& f = lc.findings[0];
  CHECK(f.kind == LimitFindingKind::Over);
  CHECK(f.bound == LimitBound::TMax);
  CHECK(f.by == Approx(40.0));
  CHECK_FALSE(f.at_inlet);
  REQUIRE(f.V);
  CHECK(*f.V == Approx(1.5).epsilon(1e-14));
  CHECK(*f.catalyst_mass == Approx(750.0).epsilon(1e-14));
  CHECK(lc.passed());
  CHECK(lc.past("R1") == Approx(40.0));
  const std::string text = limit_finding_text(f, lc.margin);
  CHECK_THAT(text, Catch::Contains("stage R1 passes T_max: its peak, 426.85 °C, is 40.00 K above "
                                   "T_max = 386.85 °C"));
  CHECK_THAT(text, Catch::Contains("at V = 1.5 m3 (750 kg of catalyst) from its inlet"));

  // Without profiles that locate it (a sweep keeps only a bed's ends): no position.
  const LimitCheck ends = check_temperature_limits(limits(660.0, {}), s, {.locate = false});
  REQUIRE(ends.findings.size() == 1);
  CHECK_FALSE(ends.findings[0].V);
  CHECK_THAT(limit_finding_text(ends.findings[0], 5), !Catch::Contains("V ="));
}

TEST_CASE("a lowest point below T_in_min, and inlets beyond a limit", "[limits]") {
  // Cooling (endothermic): 680 -> 650 K between V = 1 and 2, so 660 K at
  // V = 1 + (660 - 680) / (650 - 680) = 5/3.
  const std::vector<StageResult> cool{tube("E", {{0, 700}, {1, 680}, {2, 650}, {3, 640}})};
  const LimitCheck lc = check_temperature_limits(limits({}, 660.0), cool);
  REQUIRE(lc.findings.size() == 1);
  CHECK(lc.findings[0].kind == LimitFindingKind::Under);
  CHECK(lc.findings[0].by == Approx(20.0));
  CHECK(*lc.findings[0].V == Approx(5.0 / 3.0).epsilon(1e-14));
  CHECK_THAT(limit_finding_text(lc.findings[0], 5),
             Catch::Contains("falls below T_in_min: its lowest point"));

  // Fed above T_max: the crossing is the inlet.
  const std::vector<StageResult> hot{tube("H", {{0, 710}, {1, 730}})};
  const LimitCheck h = check_temperature_limits(limits(700.0, {}), hot);
  REQUIRE(h.findings.size() == 1);
  CHECK(h.findings[0].at_inlet);
  CHECK(*h.findings[0].V == 0.0);
  CHECK(h.findings[0].by == Approx(30.0));
  CHECK_THAT(limit_finding_text(h.findings[0], 5),
             Catch::Contains("is fed at 436.85 °C, above T_max = 426.85 °C; its peak"));

  // Fed below T_in_min (exothermic: the inlet is its lowest point).
  const std::vector<StageResult> cold{tube("C", {{0, 540}, {1, 600}})};
  const LimitCheck c = check_temperature_limits(limits({}, 550.0), cold);
  REQUIRE(c.findings.size() == 1);
  CHECK_THAT(limit_finding_text(c.findings[0], 5),
             Catch::Contains("is fed at 266.85 °C, 10.00 K below the lowest useful inlet "
                             "temperature T_in_min"));
}

TEST_CASE("a peak within the margin of T_max gets a note, at it, no margin left", "[limits]") {
  const std::vector<StageResult> s{tube("R1", {{0, 600}, {1, 697}})};
  const LimitCheck near = check_temperature_limits(limits(700.0, {}), s, {.margin = 5.0});
  REQUIRE(near.findings.size() == 1);
  CHECK(near.findings[0].kind == LimitFindingKind::Near);
  CHECK(near.findings[0].by == Approx(3.0));
  CHECK_FALSE(near.passed());
  CHECK(near.past("R1") == 0.0);
  CHECK_THAT(limit_finding_text(near.findings[0], 5),
             Catch::Contains("peaks at 423.85 °C, 3.00 K below T_max = 426.85 °C (within the 5 K "
                             "margin)"));
  CHECK(check_temperature_limits(limits(700.0, {}), s, {.margin = 2.0}).findings.empty());

  // A bed cut at T_max by the integrator lands within 1e-6 of it: at the
  // limit, not past it.
  const std::vector<StageResult> cut{tube("B1", {{0, 600}, {1, 700 + 1e-7}})};
  const LimitCheck at = check_temperature_limits(limits(700.0, {}), cut);
  REQUIRE(at.findings.size() == 1);
  CHECK(at.findings[0].kind == LimitFindingKind::Near);
  CHECK(at.findings[0].by == 0.0);
  CHECK_THAT(limit_finding_text(at.findings[0], 5), Catch::Contains("no margin left"));

  // An exothermic bed fed at T_in_min: its inlet is the designer's choice, no note.
  const std::vector<StageResult> fed{tube("R2", {{0, 551}, {1, 600}})};
  CHECK(check_temperature_limits(limits({}, 550.0), fed).findings.empty());
}

TEST_CASE("tanks have no position, exchangers and cases without limits are not checked",
          "[limits]") {
  StageResult tank;
  tank.id = "T";
  tank.kind = StageKind::Cstr;
  tank.inlet.T = 600;
  tank.outlet.T = tank.T_max = 720;
  tank.T_min = 600;
  tank.profile = {{0, 600, 0, {}, {}}, {1, 720, 0.5, {}, {}}};
  StageResult heater = tube("X", {{0, 600}, {0, 900}});
  heater.kind = StageKind::Exchanger;
  const std::vector<StageResult> s{tank, heater};
  const LimitCheck lc = check_temperature_limits(limits(700.0, {}), s);
  REQUIRE(lc.findings.size() == 1);
  CHECK(lc.findings[0].tank);
  CHECK_FALSE(lc.findings[0].V);
  CHECK_THAT(limit_finding_text(lc.findings[0], 5),
             Catch::Contains("stage T (a stirred tank) runs at 446.85 °C, 20.00 K above"));
  const LimitCheck none = check_temperature_limits(limits({}, {}), s);
  CHECK_FALSE(none.applies());
  CHECK(none.findings.empty());
  CHECK_THROWS_AS(check_temperature_limits(limits(700.0, {}), s, {.margin = -1}),
                  std::invalid_argument);
}

TEST_CASE("a solved adiabatic bed passes T_max where the adiabatic line says", "[limits]") {
  // Independent: X* = (T_max - T0) / lambda on the adiabatic line, V* by
  // GSL quadrature of the design equation (hot_bed_crossing). The check
  // interpolates linearly between CVODE's steps (rtol 1e-8), which puts
  // the crossing 2.8e-5 short of V* here (measured); 1e-4 bounds it.
  const Case c = load(test::kHotBed);
  const TrainResult r = run_train(c);
  const double V_star = hot_bed_crossing(test::HotBed::T_max);
  REQUIRE(r.limit_check.findings.size() == 1);
  const LimitFinding& f = r.limit_check.findings[0];
  CHECK(f.kind == LimitFindingKind::Over);
  CHECK(f.by == Approx(r.stages[0].T_max - test::HotBed::T_max).epsilon(1e-14));
  // Nearly complete conversion: the peak is close to T0 + lambda = 975 K.
  CHECK(r.stages[0].T_max == Approx(975.0).epsilon(1e-3));
  REQUIRE(f.V);
  CHECK(*f.V == Approx(V_star).epsilon(1e-4));
  CHECK(*f.catalyst_mass == Approx(*f.V * test::HotBed::bulk_density).epsilon(1e-14));
  // design_warnings (what `run` prints) says it first.
  const auto w = design_warnings(c, r);
  REQUIRE_FALSE(w.empty());
  CHECK_THAT(w[0], Catch::Contains("stage R1 passes T_max"));
}

TEST_CASE("a sweep row whose bed passes T_max is over_limit, with its column and count",
          "[limits][sweep]") {
  using namespace rxtrain::sweep;
  const Case c = load(test::kHotBed);
  const OutputSpec o = OutputSpec::defaults(c);
  const auto names = o.names();
  const auto col = std::find(names.begin(), names.end(), "R1.over_limit");
  REQUIRE(col != names.end());  // a default column where the case gives limits
  PointWorkspace ws;
  ws.train.equilibrium_views = false;
  ws.train.solvers.tube.full_profile = false;  // as a sweep runs
  const PointResult p = evaluate_point(c, o, ws);
  CHECK(p.status == RunStatus::OverLimit);
  CHECK(std::string(run_status_name(p.status)) == "over_limit");
  const auto k = static_cast<std::size_t>(col - names.begin());
  REQUIRE(p.outputs[k]);
  const auto t_max =
      static_cast<std::size_t>(std::find(names.begin(), names.end(), "R1.T_peak") - names.begin());
  CHECK(*p.outputs[k] == Approx(*p.outputs[t_max] - test::HotBed::T_max).epsilon(1e-14));
  CHECK_THAT(p.message, Catch::Contains("stage R1 passes T_max"));
  // Counted, and kept in the percentiles (the hot tail is the point).
  const std::vector<RunRow> rows{{0, {}, p}};
  const StudySummary s = summarize_study(names, {}, rows);
  CHECK(s.statuses.at("over_limit") == 1);
  REQUIRE(s.percentiles[k].p);
  CHECK(s.percentiles[k].p->n == 1);
}

TEST_CASE("run and sweep say when a bed passes T_max", "[limits][cli]") {
  // The demo: one bed, limit 620 °C, peak 624.28 °C.
  namespace fs = std::filesystem;
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-oxidation-staging.yaml";
  const auto dir = fs::temp_directory_path() / "rxtrain_limit_cli";
  fs::remove_all(dir);
  fs::create_directories(dir);
  const auto r = test::run_rxtrain("run '" + demo + "' --json '" + (dir / "r.json").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK_THAT(r.out, Catch::Contains("stage R1 passes T_max: its peak, 624.28 °C, is 4.28 K above "
                                    "T_max = 620.00 °C; it first reaches T_max at V = "));
  const auto j = nlohmann::json::parse(test::slurp(dir / "r.json"));
  const auto& st = j["stages"][0];
  const auto& lim = st["limit"];
  CHECK(lim["T_max"].get<double>() == Approx(893.15));
  CHECK(lim["over_limit"].get<double>() == Approx(st["T_peak"].get<double>() - 893.15));
  REQUIRE(lim["findings"].size() == 1);
  const auto& f = lim["findings"][0];
  CHECK(f["kind"] == "over");
  CHECK(f["bound"] == "T_max");
  // The position, by the closed-form linear interpolation on the JSON's
  // own profile.
  const auto& V = st["profile"]["V"];
  const auto& T = st["profile"]["T"];
  std::size_t k = 0;
  while (T[k].get<double>() <= 893.15) ++k;
  REQUIRE(k > 0);
  const double Ta = T[k - 1], Tb = T[k], Va = V[k - 1], Vb = V[k];
  CHECK(f["V"].get<double>() == Approx(Va + (893.15 - Ta) / (Tb - Ta) * (Vb - Va)));
  CHECK(f["catalyst_mass"].get<double>() == Approx(f["V"].get<double>() * 550.0));

  // A grid over the feed temperature: the hotter feeds pass T_max.
  const auto s =
      test::run_rxtrain("sweep '" + demo + "' --vary feed.T=400degC:430degC:4 --jobs 1 --csv '" +
                        (dir / "s.csv").string() + "'");
  INFO(s.err);
  REQUIRE(s.exit_code == 0);
  CHECK_THAT(s.out, Catch::Contains("4 runs: 2 ok, 2 over_limit"));
  CHECK_THAT(s.out, Catch::Contains("R1.over_limit"));
  const std::string csv = test::slurp(dir / "s.csv");
  CHECK_THAT(csv, Catch::Contains("R1.over_limit"));
  CHECK_THAT(csv, Catch::Contains(",over_limit,\"stage R1 passes T_max: its peak, 624.28 °C"));
  fs::remove_all(dir);

  CHECK(test::run_rxtrain("run '" + demo + "' --limit-margin 5degC").exit_code == 2);
  CHECK(test::run_rxtrain("run '" + demo + "' --limit-margin -1K").exit_code == 2);
  // compare: the layout as written is infeasible with the finding; on the
  // three-bed converter the first bed peaks 0.98 K under T_max: a note.
  const auto cmp = test::run_rxtrain("compare '" + demo + "'");
  REQUIRE(cmp.exit_code == 0);
  CHECK_THAT(cmp.out, Catch::Contains("stage R1 passes T_max: its peak, 624.28 °C"));
  const std::string three = std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-three-bed-converter.yaml";
  const auto near = test::run_rxtrain("compare '" + three + "' --limit-margin 0.5K");
  REQUIRE(near.exit_code == 0);
  const std::string note =
      "stage B1 peaks at 619.02 °C, 0.98 K below T_max = 620.00 °C (within the 1 K margin)";
  CHECK_THAT(near.out, !Catch::Contains(note.substr(0, 20)));
  const auto wide = test::run_rxtrain("compare '" + three + "' --limit-margin 1K");
  REQUIRE(wide.exit_code == 0);
  // The note stands in the notes column of the first-ranked layout, the
  // case as written.
  const auto row = wide.out.find("\n*  1 ");
  REQUIRE(row != std::string::npos);
  CHECK(wide.out.substr(row, wide.out.find('\n', row + 1) - row).find(note) != std::string::npos);
}
