// Levenspiel curves of a train: the area under each stage's curve
// F_key,feed/(-r_key) against X is the volume (or catalyst mass) the stage
// needs, since dV = F_key,feed dX / (-r_key) along a tubular reactor and
// V = F_key,feed dX / (-r_key,out) for a stirred tank (the design
// equations of ideal reactors; Levenspiel, Chemical Reaction Engineering,
// the chapters on single ideal reactors). Every case here is invented.
#include "rxtrain/stages/levenspiel.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>

#include "run_command.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/csv.hpp"
#include "rxtrain/report/json.hpp"

namespace {

using rxtrain::Case;
using rxtrain::TrainResult;

double rel(double a, double b) { return std::abs(a - b) / std::abs(b); }

// Invented liquid A -> B, exothermic, per-volume first-order rate with
// SI constants: k = 3e-4 1/s at 330 K, Ea 60 kJ/mol, dH -20 kJ/mol, so
// an adiabatic stage heats up by ~31 K for complete conversion.
std::string liquid_case(const std::string& train) {
  return R"(title: Levenspiel test, liquid A -> B (invented data)
phase: liquid
species:
  - {id: A, mw: 100 g/mol, density: 900 kg/m3, thermo: {cp: 200 J/mol/K}}
  - {id: B, mw: 100 g/mol, density: 900 kg/m3, thermo: {cp: 200 J/mol/K}}
  - {id: S, mw: 80 g/mol, density: 800 kg/m3, thermo: {cp: 150 J/mol/K}}
reactions:
  - id: r1
    equation: A => B
    rate: {A: 3.0e-4, Ea: 60 kJ/mol, T_ref: 330 K}
    dH: -20 kJ/mol
feed:
  T: 330 K
  P: 2 bar
  flows: {A: 2 mol/s, S: 6 mol/s}
key: A
train:
)" + train +
         "\n";
}

TrainResult run(const std::string& text) {
  const rxtrain::UnitParser units;
  const Case c = rxtrain::load_case_from_string(text, "lev.yaml", units);
  return rxtrain::run_train(c);
}

}  // namespace

TEST_CASE("Levenspiel areas equal the volumes of adiabatic tubular stages", "[levenspiel]") {
  const TrainResult r = run(liquid_case(R"(  - {type: pfr, id: P1, volume: 1.0 m3}
  - {type: exchanger, id: C1, T_out: 335 K}
  - {type: pfr, id: P2, target: {conversion: 0.9}})"));
  REQUIRE(r.levenspiel.size() == 2);
  for (int k : {0, 2}) {
    const auto& s = r.stages[k];
    const auto& c = r.levenspiel[k / 2];
    CHECK(c.stage == s.id);
    CHECK_FALSE(c.rectangle);
    CHECK_FALSE(c.catalyst_basis);
    CHECK(s.T_max > s.inlet.T + 5);  // the path is really non-isothermal
    CHECK(rel(c.area, *s.volume) < 1e-6);
    CHECK(c.X_in == Approx(k == 0 ? 0.0 : r.stages[0].conversion).margin(1e-12));
    CHECK(c.X_out == Approx(s.conversion).epsilon(1e-12));
  }
  // The trapezoids over the same points are a second-order rule; the
  // reported area must be the better one.
  const auto& c = r.levenspiel[0];
  double trap = 0;
  for (std::size_t i = 1; i < c.points.size(); ++i)
    trap += 0.5 * (c.points[i].inverse_rate + c.points[i - 1].inverse_rate) *
            (c.points[i].X - c.points[i - 1].X);
  CHECK(std::abs(c.area - *r.stages[0].volume) <= std::abs(trap - *r.stages[0].volume));
}

TEST_CASE("Levenspiel rectangles equal the volumes of stirred tanks", "[levenspiel]") {
  const TrainResult r = run(liquid_case(R"(  - {type: cstr, id: T1, volume: 1.5 m3}
  - {type: cstr, id: T2, target: {conversion: 0.8}, heat: isothermal})"));
  REQUIRE(r.levenspiel.size() == 2);
  for (int k : {0, 1}) {
    const auto& c = r.levenspiel[k];
    CHECK(c.rectangle);
    REQUIRE(c.points.size() == 1);
    CHECK(c.points[0].X == Approx(r.stages[k].conversion).epsilon(1e-12));
    CHECK(rel(c.area, *r.stages[k].volume) < 1e-6);
  }
  CHECK(r.levenspiel[1].X_in == Approx(r.stages[0].conversion).epsilon(1e-12));
}

TEST_CASE("isothermal first order: 1/r follows the closed form", "[levenspiel]") {
  // -r_A = k C_A0 (1 - X) at constant density, so F_A0/(-r_A) = v0 / (k (1 - X))
  // and the area from 0 to X is (v0/k) (-ln(1 - X)) (first-order PFR design
  // equation, closed form).
  const TrainResult r =
      run(liquid_case(R"(  - {type: pfr, id: P1, volume: 0.8 m3, heat: isothermal})"));
  const double k = 3.0e-4;
  // v0 from the feed: A 2 mol/s * 0.1 kg/mol / 900 + S 6 * 0.08 / 800 (ideal mixing of volumes).
  const double v0 = 2 * 0.1 / 900 + 6 * 0.08 / 800;
  const auto& c = r.levenspiel.at(0);
  REQUIRE(c.points.size() > 5);
  for (const auto& p : c.points) CHECK(rel(p.inverse_rate, v0 / (k * (1 - p.X))) < 1e-9);
  CHECK(rel(c.area, v0 / k * -std::log(1 - c.X_out)) < 1e-7);
  CHECK(rel(c.area, 0.8) < 1e-6);
}

TEST_CASE("catalyst-basis curves stand for catalyst mass", "[levenspiel]") {
  std::string text =
      liquid_case(R"(  - {type: pfr, id: P1, catalyst: 400 kg, bulk_density: 800 kg/m3}
  - {type: cstr, id: T1, catalyst: 300 kg, bulk_density: 800 kg/m3})");
  // The same rate per kg at 800 kg/m3: A = 3e-4 / 800.
  text.replace(text.find("rate: {A: 3.0e-4"), 16, "rate: {per: catalyst, A: 3.75e-7");
  const TrainResult r = run(text);
  REQUIRE(r.levenspiel.size() == 2);
  for (int k : {0, 1}) {
    CHECK(r.levenspiel[k].catalyst_basis);
    CHECK(rel(r.levenspiel[k].area, *r.stages[k].catalyst_mass) < 1e-6);
  }
}

TEST_CASE("Levenspiel data in the JSON and CSV outputs", "[levenspiel]") {
  const TrainResult r = run(liquid_case(R"(  - {type: cstr, id: T1, volume: 1.0 m3}
  - {type: pfr, id: P1, volume: 0.5 m3})"));
  const auto j = rxtrain::to_json(r);
  REQUIRE(j.at("levenspiel").size() == 2);
  CHECK(j["levenspiel"][0]["stage"] == "T1");
  CHECK(j["levenspiel"][0]["basis"] == "volume");
  CHECK(j["levenspiel"][0]["rectangle"] == true);
  CHECK(j["levenspiel"][1]["rectangle"] == false);
  CHECK(j["levenspiel"][1]["area"].get<double>() == Approx(0.5).epsilon(1e-6));
  CHECK(j["levenspiel"][1]["points"][0].contains("inverse_rate"));
  const std::string csv = rxtrain::levenspiel_csv(r);
  CHECK(csv.rfind("stage,unit,conversion,F_key_feed_over_minus_r,area\n", 0) == 0);
  const auto row = csv.find("P1,m3,,,");  // the stage's area row
  REQUIRE(row != std::string::npos);
  CHECK(std::stod(csv.substr(row + 8)) == Approx(0.5).epsilon(1e-6));
}

TEST_CASE("run --json and --csv carry the Levenspiel data of a demo case", "[levenspiel][cli]") {
  namespace fs = std::filesystem;
  const auto dir = fs::temp_directory_path() / "rxtrain_cli_levenspiel";
  fs::remove_all(dir);
  fs::create_directories(dir);
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/isomerization-two-bed.yaml";
  const auto r =
      rxtrain::test::run_rxtrain("run '" + demo + "' --json '" + (dir / "r.json").string() +
                                 "' --csv '" + (dir / "csv").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const auto j = nlohmann::json::parse(rxtrain::test::slurp(dir / "r.json"));
  REQUIRE(j.at("levenspiel").size() == 2);
  for (std::size_t k = 0; k < 2; ++k) {
    const auto& c = j["levenspiel"][k];
    // Both beds count per kg of catalyst: the area is the catalyst mass.
    CHECK(c["basis"] == "catalyst");
    const auto& stage = j["stages"][k == 0 ? 0 : 2];
    CHECK(c["stage"] == stage["id"]);
    CHECK(c["area"].get<double>() == Approx(stage["catalyst_mass"].get<double>()).epsilon(1e-6));
  }
  const std::string csv = rxtrain::test::slurp(dir / "csv" / "levenspiel.csv");
  CHECK(csv.rfind("stage,unit,conversion,F_key_feed_over_minus_r,area\n", 0) == 0);
  CHECK(csv.find("nan") == std::string::npos);
  fs::remove_all(dir);
}

TEST_CASE("Levenspiel areas of beds resolved finely meet their exact sizes", "[levenspiel]") {
  // With the beds integrated at rtol 1e-12 the profile's Hermite
  // interpolant is close to the path, and the area (the integral of
  // F_key,feed / (-r) over X) must meet the stage's size, its exact value
  // by the design equation, as closely as the header promises (~1e-7):
  // a rule of the quadrature that went wrong on some steps (the 7-point
  // Kronrod rule taken where it meets its own estimate) would miss it.
  // Measured when the Kronrod rule came in: B1 2.3e-8, B2 6.7e-10, B3
  // 1.7e-10 relative, the same to 2e-15 as with the Gauss-Legendre rule
  // alone. The three beds of the SO2 demo run close to equilibrium, where
  // 1/r is steepest.
  const rxtrain::UnitParser units;
  const Case c = rxtrain::load_case(
      std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-three-bed-converter.yaml", units);
  rxtrain::TrainOptions o;
  o.solvers.tube.cvode.rtol = 1e-12;
  const TrainResult r = rxtrain::run_train(c, o);
  REQUIRE(r.levenspiel.size() == 3);
  for (std::size_t k = 0; k < r.levenspiel.size(); ++k) {
    const auto& s = r.stages[2 * k];
    REQUIRE(r.levenspiel[k].catalyst_basis);
    INFO(s.id << ": area " << r.levenspiel[k].area << " kg, catalyst " << *s.catalyst_mass);
    CHECK(rel(r.levenspiel[k].area, *s.catalyst_mass) < 1e-7);
  }
  // And the liquid bed of the first test, per volume.
  const Case lc = rxtrain::load_case_from_string(
      liquid_case("  - {type: pfr, id: P1, volume: 1.0 m3}"), "lev.yaml", units);
  const TrainResult lr = rxtrain::run_train(lc, o);
  REQUIRE(lr.levenspiel.size() == 1);
  INFO("liquid: area " << lr.levenspiel[0].area << " m3");
  CHECK(rel(lr.levenspiel[0].area, 1.0) < 1e-7);
}
