// Reporters, tested on a TrainResult built by hand (no solver).
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <functional>
#include <limits>
#include <sstream>

#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/csv.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/report/quantity.hpp"
#include "rxtrain/report/table.hpp"

using namespace rxtrain;

namespace {

TrainResult sample_result() {
  TrainResult t;
  t.title = "hand-made <result>";
  t.species = {"A", "B"};
  t.key = "A";
  t.feed = Stream{400.0, 2.0e6, {1.0, 0.0}};
  StageResult r;
  r.id = "R1";
  r.kind = StageKind::Pfr;
  r.heat = HeatMode::Adiabatic;
  r.inlet = t.feed;
  r.outlet = Stream{430.0, 2.0e6, {0.4, 0.6}};
  r.volume = 2.0;
  r.space_time = 12.5;
  r.T_max = 430.0;
  r.T_min = 400.0;
  r.conversion = 0.6;
  r.profile = {{0.0, 400.0, 0.0, {1.0, 0.0}, {}}, {2.0, 430.0, 0.6, {0.4, 0.6}, {}}};
  StageResult e;
  e.id = "E1";
  e.kind = StageKind::Exchanger;
  e.inlet = r.outlet;
  e.outlet = Stream{400.0, 2.0e6, {0.4, 0.6}};
  e.duty = -1500.0;
  e.T_max = 430.0;
  e.T_min = 400.0;
  e.conversion = 0.6;
  t.stages = {r, e};
  t.outlet = e.outlet;
  t.conversion = 0.6;
  return t;
}

std::string read(const std::filesystem::path& p) {
  std::ifstream f(p);
  std::stringstream s;
  s << f.rdbuf();
  return s.str();
}

}  // namespace

TEST_CASE("JSON result follows the documented layout, SI units, null where not applicable",
          "[report]") {
  const auto j = to_json(sample_result());
  REQUIRE(j["title"] == "hand-made <result>");
  REQUIRE(j["species"] == nlohmann::json({"A", "B"}));
  REQUIRE(j["key"] == "A");
  REQUIRE(j["stages"].size() == 2);
  const auto& r1 = j["stages"][0];
  CHECK(r1["id"] == "R1");
  CHECK(r1["type"] == "pfr");
  CHECK(r1["volume"].get<double>() == 2.0);
  CHECK(r1["catalyst_mass"].is_null());
  CHECK(r1["space_time"].get<double>() == 12.5);
  CHECK(r1["T_peak"].get<double>() == 430.0);
  CHECK(r1["inlet"]["flows"]["A"].get<double>() == 1.0);
  CHECK(r1["outlet"]["P"].get<double>() == 2.0e6);
  const auto& e1 = j["stages"][1];
  CHECK(e1["type"] == "exchanger");
  CHECK(e1["volume"].is_null());
  CHECK(e1["heat"].is_null());
  CHECK(e1["duty"].get<double>() == -1500.0);
  CHECK(j["outlet"]["T"].get<double>() == 400.0);
  CHECK(j["caution"].get<std::string>().find("screening") != std::string::npos);
}

TEST_CASE("a non-finite number never reaches JSON, CSV or the table", "[report]") {
  auto t = sample_result();
  t.stages[0].space_time = std::numeric_limits<double>::quiet_NaN();
  t.stages[0].duty = std::numeric_limits<double>::infinity();
  const std::string all = json_text(t) + stages_csv(t) + profiles_csv(t) + format_stage_table(t);
  CHECK(all.find("nan") == std::string::npos);
  CHECK(all.find("NaN") == std::string::npos);
  CHECK(all.find("inf") == std::string::npos);
  CHECK(to_json(t)["stages"][0]["space_time"].is_null());
}

TEST_CASE("CSV files have one header and one row per stage or profile point", "[report]") {
  const auto t = sample_result();
  const std::string s = stages_csv(t);
  CHECK(s.rfind("stage,type,heat,sized,volume_m3,", 0) == 0);
  CHECK(std::count(s.begin(), s.end(), '\n') == 3);
  CHECK(s.find("\nR1,pfr,adiabatic,no,2,,12.5,") != std::string::npos);
  const std::string p = profiles_csv(t);
  CHECK(p.rfind("stage,V_m3,T_K,P_Pa,conversion,F_A_mol_per_s,F_B_mol_per_s\n", 0) == 0);
  CHECK(std::count(p.begin(), p.end(), '\n') == 3);
}

TEST_CASE("the stage table shows display units and the caution", "[report]") {
  const std::string s = format_stage_table(sample_result());
  CHECK(s.find("T peak °C") != std::string::npos);
  CHECK(s.find("156.85") != std::string::npos);  // 430 K
  CHECK(s.find("-1.50") != std::string::npos);   // duty kW
  CHECK(s.find("0.6000") != std::string::npos);
  CHECK(s.find("licensed engineers") != std::string::npos);
}

TEST_CASE("OutputSet writes nothing until commit and cleans up when abandoned", "[report]") {
  const auto dir = std::filesystem::temp_directory_path() / "rxtrain_outputset_test";
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  { std::ofstream(dir / "old.json") << "old"; }
  {
    OutputSet out;
    out.add(dir / "old.json", "new");
    out.add(dir / "sub" / "b.csv", "b");
    CHECK(read(dir / "old.json") == "old");
    CHECK_FALSE(std::filesystem::exists(dir / "sub" / "b.csv"));
  }  // abandoned: the existing file stays, no temporary is left
  CHECK(read(dir / "old.json") == "old");
  int files = 0;
  for (const auto& e : std::filesystem::recursive_directory_iterator(dir))
    files += e.is_regular_file();
  CHECK(files == 1);
  {
    OutputSet out;
    out.add(dir / "old.json", "new");
    out.add(dir / "sub" / "b.csv", "b");
    out.commit();
  }
  CHECK(read(dir / "old.json") == "new");
  CHECK(read(dir / "sub" / "b.csv") == "b");
  std::filesystem::remove_all(dir);
}

// Stream data by hand from the definitions: y_i = F_i / sum F, m_i = F_i M_i,
// closure = (m_in - m_out) / m_in.
TEST_CASE("streams carry mole fractions, mass flows and each stage's mass balance", "[report]") {
  auto t = sample_result();
  t.molar_mass = {0.050, 0.060};  // B heavier than A: the reaction A -> B does not keep mass
  const auto j = to_json(t);
  const auto& out = j["stages"][0]["outlet"];
  CHECK(out["x"]["A"].get<double>() == Approx(0.4));
  CHECK(out["x"]["B"].get<double>() == Approx(0.6));
  CHECK(out["mass_flows"]["B"].get<double>() == Approx(0.036));
  CHECK(out["mass_flow"].get<double>() == Approx(0.056));
  // in 0.050 kg/s, out 0.4*0.050 + 0.6*0.060 = 0.056 kg/s: (0.050 - 0.056) / 0.050 = -0.12
  CHECK(j["stages"][0]["mass_balance"].get<double>() == Approx(-0.12));
  CHECK(j["stages"][1]["mass_balance"].get<double>() == 0.0);
  const std::string table = format_stage_table(t);
  CHECK(table.find("mass balance per reactor, (in - out) / in: R1 -1.2e-01") != std::string::npos);
  CHECK(table.find("outlet kg/s") != std::string::npos);
  const std::string s = streams_csv(t);
  CHECK(s.find("\nR1 outlet,430,2000000,1,0.056,0.4,0.6,0.4,0.6\n") != std::string::npos);

  t.molar_mass.clear();  // a gas case may give no molar masses: said, not guessed
  CHECK(to_json(t)["feed"]["mass_flow"].is_null());
  CHECK(format_stage_table(t).find("mass flows: not shown") != std::string::npos);
}

TEST_CASE("every number in the run's JSON has its unit in the units object", "[report]") {
  auto t = sample_result();
  t.molar_mass = {0.050, 0.050};
  t.products = {"B"};  // yields and selectivities are numbers too
  t.yield = {0.4};
  t.selectivity = {0.8};
  t.reactions = {"r1"};  // and effectiveness factors, in ranges and profiles
  for (auto& st : t.stages) {
    st.yield = {0.4};
    st.selectivity = {0.8};
    st.effectiveness = {EffectivenessRange{0.5, 0.9, 0.9}};
    for (auto& p : st.profile) p.eta = {0.7};
  }
  const auto j = to_json(t);
  REQUIRE(j["stages"][0]["yield"]["B"] == 0.4);
  REQUIRE(j["stages"][0]["effectiveness"]["r1"]["min"] == 0.5);
  const auto& units = j["units"];
  std::vector<std::string> missing;
  std::function<void(const nlohmann::json&, const std::string&)> walk =
      [&](const nlohmann::json& o, const std::string& key) {
        if (o.is_object()) {
          for (auto it = o.begin(); it != o.end(); ++it)
            // Maps keyed by species id take their unit from the map's name.
            walk(it.value(), key == "flows" || key == "mass_flows" || key == "x" ||
                                     key == "yield" || key == "selectivity" ||
                                     key == "effectiveness"
                                 ? key
                                 : it.key());
        } else if (o.is_array()) {
          for (const auto& v : o) walk(v, key);
        } else if (o.is_number() && !units.contains(key) && key != "steps" && key != "rhs_evals" &&
                   key != "jac_evals" && key != "newton_iters" && key != "error_test_fails") {
          missing.push_back(key);  // counts of the solver are plain counts
        }
      };
  walk(j, "");
  std::string list;
  for (const auto& k : missing) list += k + " ";
  INFO(list);
  CHECK(missing.empty());
  CHECK(units["ghsv"] == "1/h");  // the named exception to SI
}

TEST_CASE("sweep columns read in words and display units", "[report]") {
  const Quantity peak = column_quantity("R1.T_peak", "K");
  CHECK(peak.label() == "Peak temperature of R1 (°C)");
  CHECK(peak.show(700.0) == Approx(426.85));  // 700 K - 273.15
  CHECK(peak.text(700.0) == "426.85");
  CHECK(column_quantity("feed.P", "Pa").text(2.5e6) == "25.00");
  CHECK(column_quantity("train.R1.catalyst", "kg").label() == "Catalyst in R1 (kg)");
  CHECK(column_quantity("R2.duty", "W").text(-1.5e6) == "-1500");       // kW
  CHECK(column_quantity("R1.over_limit", "K").text(4.3597) == "4.36");  // a difference: no offset
  CHECK(column_quantity("X", "-").text(0.999991) == "0.999991");
  // A column this does not know keeps its name and SI unit.
  CHECK(column_quantity("R1.something", "m3").label() == "R1.something (m3)");
}
