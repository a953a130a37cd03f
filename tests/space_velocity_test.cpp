// Space velocities on a named basis (the case's space_velocity_basis)
// against hand calculations from their definitions, as the trade quotes
// them:
//   WHSV = mass flow of the basis species at the stage inlet / catalyst mass
//   LHSV = their flow as liquid (mass / density) / reactor volume
//   GHSV = the whole gas at 0 °C and 1 atm / reactor volume
// Molar masses by hand from the IUPAC conventional atomic weights (C 12.011,
// H 1.008); the molar volume of an ideal gas at 0 °C and 1 atm is
// R 273.15 K / 101325 Pa. Every case here is invented.
#include <fmt/format.h>

#include <catch2/catch.hpp>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>

#include "run_command.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"

namespace {

constexpr double kMwBenzene = (6 * 12.011 + 6 * 1.008) / 1000;             // kg/mol
constexpr double kMwHydrogen = (2 * 1.008) / 1000;                         // kg/mol
constexpr double kMwCyclohexane = (6 * 12.011 + 12 * 1.008) / 1000;        // kg/mol
constexpr double kNormalMolarVolume = 8.31446261815324 * 273.15 / 101325;  // m3/mol

// Benzene hydrogenation in hydrogen, two isothermal beds of 500 kg and
// 800 kg (bulk density 800 kg/m3); liquid densities of the hydrocarbons
// invented for LHSV.
std::string two_bed_case(const std::string& basis) {
  return fmt::format(R"(title: Space velocity basis (invented data)
phase: gas
species:
  - {{id: BZ, formula: C6H6, density: 880 kg/m3, thermo: {{cp: 100 J/mol/K}}}}
  - {{id: H2, formula: H2, thermo: {{cp: 29 J/mol/K}}}}
  - {{id: CH, formula: C6H12, density: 780 kg/m3, thermo: {{cp: 150 J/mol/K}}}}
reactions:
  - id: hyd
    equation: BZ + 3 H2 => CH
    rate: {{per: catalyst, A: 2.0e-3 mol/(kg*s*bar^1.5), Ea: 55 kJ/mol, T_ref: 450 K,
            driving: pressure, orders: {{BZ: 1, H2: 0.5}}}}
    dH: -206 kJ/mol
feed:
  T: 150 degC
  P: 30 bar
  flows: {{BZ: 12 kmol/h, H2: 600 kmol/h}}
key: BZ
{basis}
train:
  - {{type: pfr, id: B1, catalyst: 500 kg, bulk_density: 800 kg/m3, heat: isothermal}}
  - {{type: pfr, id: B2, catalyst: 800 kg, bulk_density: 800 kg/m3, heat: isothermal}}
)",
                     fmt::arg("basis", basis));
}

rxtrain::TrainResult run(const std::string& text) {
  const rxtrain::UnitParser units;
  return rxtrain::run_train(rxtrain::load_case_from_string(text, "sv.yaml", units));
}

}  // namespace

TEST_CASE("WHSV and LHSV on a named basis follow their definitions by hand", "[space-velocity]") {
  const auto r = run(two_bed_case("space_velocity_basis: [BZ, CH]"));
  REQUIRE(r.stages.size() == 2);
  const auto& b1 = r.stages[0];
  // Bed 1 sees the feed: 12 kmol/h of benzene and no cyclohexane.
  const double F_bz = 12.0 / 3.6;  // mol/s
  const double V1 = 500.0 / 800.0;
  CHECK(*b1.whsv == Approx(F_bz * kMwBenzene * 3600 / 500).epsilon(1e-9));
  CHECK(*b1.lhsv == Approx(F_bz * kMwBenzene / 880 * 3600 / V1).epsilon(1e-9));
  CHECK(*b1.ghsv == Approx((12.0 + 600.0) / 3.6 * kNormalMolarVolume * 3600 / V1).epsilon(1e-9));
  CHECK(b1.space_velocity_basis == std::vector<std::string>{"BZ", "CH"});
  // Bed 2 on what reaches it: benzene left and cyclohexane made.
  const auto& b2 = r.stages[1];
  const double m2 = b2.inlet.F[0] * kMwBenzene + b2.inlet.F[2] * kMwCyclohexane;
  REQUIRE(b2.inlet.F[2] > 0.1);  // bed 1 converted a good part
  CHECK(*b2.whsv == Approx(m2 * 3600 / 800).epsilon(1e-9));
  CHECK(*b2.lhsv ==
        Approx((b2.inlet.F[0] * kMwBenzene / 880 + b2.inlet.F[2] * kMwCyclohexane / 780) * 3600 /
               (800.0 / 800.0))
            .epsilon(1e-9));
}

TEST_CASE("without a basis WHSV is on the whole stream, hydrogen included", "[space-velocity]") {
  const auto r = run(two_bed_case(""));
  const auto& b1 = r.stages[0];
  const double mass = 12.0 / 3.6 * kMwBenzene + 600.0 / 3.6 * kMwHydrogen;  // kg/s
  CHECK(*b1.whsv == Approx(mass * 3600 / 500).epsilon(1e-9));
  CHECK(b1.space_velocity_basis == std::vector<std::string>{"BZ", "H2", "CH"});
  // Hydrogen has no liquid density: no LHSV on the whole stream.
  CHECK_FALSE(b1.lhsv.has_value());
  // The named basis changes WHSV by the hydrogen's share only.
  const auto named = run(two_bed_case("space_velocity_basis: [BZ]"));
  CHECK(*named.stages[0].whsv / *b1.whsv ==
        Approx(12 * kMwBenzene / (12 * kMwBenzene + 600 * kMwHydrogen)).epsilon(1e-9));
  CHECK(*named.stages[0].ghsv == Approx(*b1.ghsv).epsilon(1e-12));
}

TEST_CASE("space_velocity_basis is refused where it is wrong", "[space-velocity]") {
  const rxtrain::UnitParser units;
  auto error_of = [&](const std::string& basis, int line = 18) {
    try {
      rxtrain::load_case_from_string(two_bed_case(basis), "sv.yaml", units);
    } catch (const rxtrain::InputError& e) {
      CHECK(e.where().line == line);
      return e.message();
    }
    FAIL("loaded: " << basis);
    return std::string();
  };
  CHECK(error_of("space_velocity_basis: [BZ, CX]") ==
        "unknown species \"CX\" in space_velocity_basis; did you mean \"CH\"?");
  CHECK_THAT(error_of("space_velocity_basis: [BZ, BZ]"), Catch::Contains("named twice"));
  CHECK_THAT(error_of("space_velocity_basis: []"), Catch::Contains("needs a list of species"));
  CHECK_THAT(error_of("space_velocity_basis: BZ"), Catch::Contains("needs a list of species"));
  CHECK_THAT(error_of("space_velocity_basis: [BZ]\nspace_velocity_bassis: [CH]", 19),
             Catch::Contains("did you mean \"space_velocity_basis\""));
}

TEST_CASE("run prints the basis beside WHSV and LHSV on every screen", "[space-velocity][cli]") {
  namespace fs = std::filesystem;
  const auto dir = fs::temp_directory_path() / "rxtrain_cli_sv_basis";
  fs::remove_all(dir);
  const std::string demo =
      std::string(RXTRAIN_SOURCE_DIR) + "/cases/benzene-hydrogenation-bed.yaml";
  const auto r =
      rxtrain::test::run_rxtrain("run '" + demo + "' --json '" + (dir / "r.json").string() +
                                 "' --report '" + (dir / "rep").string() + "'");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("WHSV and LHSV: on BZ + CH at the stage inlet") != std::string::npos);
  const auto j = nlohmann::json::parse(rxtrain::test::slurp(dir / "r.json"));
  const auto& s = j["stages"][0];
  CHECK(s["space_velocity_basis"] == std::vector<std::string>{"BZ", "CH"});
  // The demo feeds 12 kmol/h of benzene and no cyclohexane.
  CHECK(s["whsv"].get<double>() ==
        Approx(12.0 / 3.6 * kMwBenzene * 3600 / s["catalyst_mass"].get<double>()).epsilon(1e-9));
  const std::string html = rxtrain::test::slurp(dir / "rep" / "report.html");
  CHECK(html.find("WHSV and LHSV on") != std::string::npos);
  CHECK(html.find("<td>BZ + CH</td>") != std::string::npos);
  fs::remove_all(dir);
}
