// The command line as users run it: every demo case, outputs, exit codes.
#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <regex>

#include "run_command.hpp"

using rxtrain::test::run_rxtrain;
using rxtrain::test::slurp;
namespace fs = std::filesystem;

namespace {

fs::path scratch(const std::string& name) {
  const auto d = fs::temp_directory_path() / ("rxtrain_cli_" + name);
  fs::remove_all(d);
  fs::create_directories(d);
  return d;
}

}  // namespace

TEST_CASE("every demo case under cases/ runs and writes consistent JSON and CSV", "[cli]") {
  const fs::path cases = fs::path(RXTRAIN_SOURCE_DIR) / "cases";
  int n = 0;
  for (const auto& e : fs::directory_iterator(cases)) {
    if (e.path().extension() != ".yaml") continue;
    ++n;
    DYNAMIC_SECTION(e.path().filename().string()) {
      const auto dir = scratch(e.path().stem().string());
      const auto r =
          run_rxtrain("run '" + e.path().string() + "' --json '" + (dir / "r.json").string() +
                      "' --csv '" + (dir / "csv").string() + "'");
      INFO(r.err);
      REQUIRE(r.exit_code == 0);
      CHECK(r.out.find("licensed engineers") != std::string::npos);
      CHECK(r.out.find("nan") == std::string::npos);
      const auto j = nlohmann::json::parse(slurp(dir / "r.json"));
      REQUIRE(j["stages"].is_array());
      REQUIRE_FALSE(j["stages"].empty());
      // Each stage is fed by the one before, and the train outlet is the last
      // stage's; only the hot side of an interchanger (a loop) stands between
      // its `hot_from` and the next stage, changing nothing but T.
      std::string hot_from;
      double T_hot_out = 0;
      for (const auto& s : j["stages"])
        if (s.contains("interchanger")) {
          hot_from = s["interchanger"]["hot_from"];
          T_hot_out = s["interchanger"]["T_hot_out"];
        }
      auto after = [&](const nlohmann::json& s) {
        nlohmann::json out = s["outlet"];
        if (s["id"] == hot_from) out["T"] = T_hot_out;
        return out;
      };
      for (std::size_t i = 1; i < j["stages"].size(); ++i)
        CHECK(j["stages"][i]["inlet"] == after(j["stages"][i - 1]));
      CHECK(j["outlet"] == after(j["stages"].back()));
      for (const auto& s : j["stages"])
        CHECK(s["T_peak"].get<double>() >= s["outlet"]["T"].get<double>() - 1e-9);
      const std::string stages = slurp(dir / "csv" / "stages.csv");
      CHECK(std::count(stages.begin(), stages.end(), '\n') ==
            static_cast<long>(j["stages"].size()) + 1);
      CHECK(fs::exists(dir / "csv" / "profiles.csv"));
      fs::remove_all(dir);
    }
  }
  CHECK(n >= 3);
}

TEST_CASE("check validates a demo case without running it", "[cli]") {
  const auto r = run_rxtrain("check '" + std::string(RXTRAIN_SOURCE_DIR) +
                             "/cases/isomerization-two-bed.yaml'");
  INFO(r.err);
  CHECK(r.exit_code == 0);
  CHECK(r.out.find(": ok:") != std::string::npos);
}

TEST_CASE("a missing case file is an input error and writes no output", "[cli]") {
  const auto dir = scratch("missing");
  const auto r = run_rxtrain("run '" + (dir / "nope.yaml").string() + "' --json '" +
                             (dir / "r.json").string() + "'");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("nope.yaml") != std::string::npos);
  CHECK_FALSE(fs::exists(dir / "r.json"));
  fs::remove_all(dir);
}

TEST_CASE("help states the screening caution and the exit codes", "[cli]") {
  const auto r = run_rxtrain("--help");
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("screening") != std::string::npos);
  CHECK(r.out.find("run away") != std::string::npos);
  CHECK(r.out.find("licensed engineers") != std::string::npos);
  CHECK(r.out.find("Exit codes") != std::string::npos);
}

TEST_CASE("an unknown option is a usage error with exit code 2", "[cli]") {
  const auto r = run_rxtrain("run --no-such-option x.yaml");
  CHECK(r.exit_code == 2);
}

TEST_CASE("the README's example case runs", "[cli]") {
  const std::string readme = slurp(fs::path(RXTRAIN_SOURCE_DIR) / "README.md");
  const auto start = readme.find("```yaml\n");
  REQUIRE(start != std::string::npos);
  const auto end = readme.find("```", start + 8);
  const auto dir = scratch("readme");
  { std::ofstream(dir / "readme.yaml") << readme.substr(start + 8, end - start - 8); }
  const auto r = run_rxtrain("run '" + (dir / "readme.yaml").string() + "'");
  INFO(r.err);
  CHECK(r.exit_code == 0);
  fs::remove_all(dir);
}

TEST_CASE("sweep: four shards merged equal one unsharded run, byte for byte", "[cli][sweep]") {
  const auto dir = scratch("sweep_shards");
  const std::string c =
      (fs::path(RXTRAIN_SOURCE_DIR) / "cases" / "isomerization-two-bed.yaml").string();
  const std::string study =
      "sweep '" + c +
      "' --sample 'feed.T=normal(150degC,3degC)' --sample "
      "'reactions.isom.rate.Ea=uniform(68kJ/mol,72kJ/mol)' --runs 23 --seed 5 ";
  auto r = run_rxtrain(study + "--jobs 2 --csv '" + (dir / "all.csv").string() + "' --json '" +
                       (dir / "all.json").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("P95") != std::string::npos);
  r = run_rxtrain(study + "--jobs 1 --csv '" + (dir / "serial.csv").string() + "'");
  REQUIRE(r.exit_code == 0);
  CHECK(slurp(dir / "serial.csv") == slurp(dir / "all.csv"));
  // Tubular beds only: the runs are solved in batches of 16, and the
  // shards (about 6 runs each) begin and end inside them.
  CHECK(slurp(dir / "all.csv").find("# chain: 16\n") != std::string::npos);
  std::string shards;
  for (int k = 1; k <= 4; ++k) {
    const auto p = dir / ("s" + std::to_string(k) + ".csv");
    r = run_rxtrain(study + "--shard " + std::to_string(k) + "/4 --csv '" + p.string() + "'");
    REQUIRE(r.exit_code == 0);
    shards += " '" + p.string() + "'";
  }
  r = run_rxtrain("merge '" + (dir / "merged.csv").string() + "'" + shards + " --json '" +
                  (dir / "merged.json").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(slurp(dir / "merged.csv") == slurp(dir / "all.csv"));
  CHECK(slurp(dir / "merged.json") == slurp(dir / "all.json"));
  const auto j = nlohmann::json::parse(slurp(dir / "all.json"));
  CHECK(j["runs"].size() == 23);
  CHECK(j["percentiles"]["X"]["P50"].is_number());
  // A missing shard is refused and nothing is written.
  r = run_rxtrain("merge '" + (dir / "partial.csv").string() + "' '" + (dir / "s1.csv").string() +
                  "' '" + (dir / "s2.csv").string() + "'");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("missing shards 3/4, 4/4") != std::string::npos);
  CHECK_FALSE(fs::exists(dir / "partial.csv"));
  fs::remove_all(dir);
}

TEST_CASE("sweep: a bad path or unit is an input error and writes nothing", "[cli][sweep]") {
  const auto dir = scratch("sweep_bad");
  const std::string c =
      (fs::path(RXTRAIN_SOURCE_DIR) / "cases" / "isomerization-two-bed.yaml").string();
  const std::string csv = " --csv '" + (dir / "x.csv").string() + "'";
  auto r = run_rxtrain("sweep '" + c + "' --vary feed.temperature=120degC:200degC:5" + csv);
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("--vary: error: unknown case path \"feed.temperature\"") != std::string::npos);
  r = run_rxtrain("sweep '" + c + "' --vary train.R1.catalyst=1m3:4m3:13" + csv);
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("kg") != std::string::npos);
  r = run_rxtrain("sweep '" + c + "' --vary feed.T=120degC:200degC:5 --output X,R7.T_peak" + csv);
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("--output") != std::string::npos);
  CHECK_FALSE(fs::exists(dir / "x.csv"));
  fs::remove_all(dir);
}

TEST_CASE("sweep: a grid writes one row per point and a report", "[cli][sweep]") {
  const auto dir = scratch("sweep_grid");
  const std::string c =
      (fs::path(RXTRAIN_SOURCE_DIR) / "cases" / "liquid-tank-then-tube.yaml").string();
  const auto r = run_rxtrain(
      "sweep '" + c + "' --vary train.T2.target.conversion=0.9:0.98:3 --jobs 2 --csv '" +
      (dir / "g.csv").string() + "' --report '" + (dir / "rep").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const std::string csv = slurp(dir / "g.csv");
  CHECK(std::count(csv.begin(), csv.end(), '\n') == 13 + 3);  // 13 header lines, 3 rows
  // Every column's SI unit, named once (a target conversion is a plain number).
  CHECK(csv.find("\n# units: train.T2.target.conversion=-,X=-,") != std::string::npos);
  CHECK(csv.find(",T2.volume=m3") != std::string::npos);
  CHECK(csv.find("\n# margin: T1.volume,T2.volume\n") != std::string::npos);
  CHECK(csv.find("nan") == std::string::npos);
  CHECK(fs::exists(dir / "rep" / "report.html"));
  CHECK(fs::exists(dir / "rep" / "sweep-X.svg"));
  // Axes name the quantity and its display unit, not the raw path.
  const std::string peak = slurp(dir / "rep" / "sweep-T2-T_peak.svg");
  CHECK(peak.find("Peak temperature of T2 (°C)") != std::string::npos);
  CHECK(slurp(dir / "rep" / "sweep-X.svg").find("Overall conversion of the key (–)") !=
        std::string::npos);
  const std::string page = slurp(dir / "rep" / "report.html");
  CHECK(page.find("Newton") == std::string::npos);  // solver internals live in docs/sweeps.md
  CHECK(page.find("cold") == std::string::npos);
  CHECK(r.out.find("licensed engineers") != std::string::npos);
  fs::remove_all(dir);
}

TEST_CASE("optimize writes the optimum as JSON and a case that run reproduces", "[cli][design]") {
  const auto dir = scratch("optimize");
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/three-bed-optimize.yaml";
  const auto r = run_rxtrain("optimize '" + demo + "' --json '" + (dir / "o.json").string() +
                             "' --write-case '" + (dir / "opt.yaml").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("licensed engineers") != std::string::npos);
  CHECK(r.out.find("nan") == std::string::npos);
  CHECK(r.out.find("active constraints:") != std::string::npos);
  const auto j = nlohmann::json::parse(slurp(dir / "o.json"));
  CHECK(j["objective"] == "catalyst");
  REQUIRE(j["beds"].size() == 3);
  CHECK(j["coolers"].size() == 2);
  CHECK(j["active_constraints"].is_array());
  CHECK(j["as_written"].is_object());
  CHECK(j["by_bed_count"].size() == 1);
  CHECK(j["feed_conditioning"]["duty"].is_number());
  double W = 0;
  for (const auto& b : j["beds"]) W += b["catalyst_mass"].get<double>();
  const double total = j["total_catalyst"].get<double>();
  CHECK(W == Approx(total).epsilon(1e-12));
  // The optimum needs less catalyst than the layout as written.
  CHECK(j["as_written"]["saving"].get<double>() > 0);
  // B1 runs up to T_max (its active constraint): at the limit, not past it.
  const auto& lc = j["limit_check"];
  CHECK(lc["margin"].get<double>() == 5.0);
  REQUIRE(lc["findings"].size() == 1);
  CHECK(lc["findings"][0]["stage"] == "B1");
  CHECK(lc["findings"][0]["kind"] == "near");
  CHECK(lc["findings"][0]["by"].get<double>() < 0.005);
  CHECK(r.out.find("the optimum: stage B1 peaks at T_max = 470.00 °C (no margin left)") !=
        std::string::npos);

  // The written case, run as any case, holds the same catalyst (to its six
  // significant digits: each bed rounded by at most 1e-5 of itself) and
  // reaches the target; it says that it was rounded.
  CHECK(slurp(dir / "opt.yaml").find("# Rounded (sizes to 6 significant digits") !=
        std::string::npos);
  const auto run = run_rxtrain("run '" + (dir / "opt.yaml").string() + "' --json '" +
                               (dir / "r.json").string() + "'");
  INFO(run.err);
  REQUIRE(run.exit_code == 0);
  const auto rj = nlohmann::json::parse(slurp(dir / "r.json"));
  double W_run = 0;
  for (const auto& s : rj["stages"])
    if (s["type"] == "pfr") W_run += s["catalyst_mass"].get<double>();
  CHECK(W_run == Approx(total).epsilon(1e-5));
  // B1 is cut at T_max: rounded, it is fed a little cooler and made a
  // little smaller, so that the written case does not pass the limit.
  for (const auto& s : rj["stages"])
    if (s["type"] == "pfr") CHECK(s["limit"]["over_limit"].get<double>() == 0.0);
  CHECK(rj["conversion"].get<double>() == Approx(j["target"].get<double>()).margin(1e-6));
  fs::remove_all(dir);
}

TEST_CASE("run: an approach temperature beyond the window is left out, and the table says why",
          "[cli]") {
  // The isomerization demo's R1 ends where K(T) is nearly flat: the
  // temperature at which its X_out is equilibrium lies 186.79 K above its
  // outlet (R2's, 52.84 K, lies within the default 100 K window).
  const auto dir = scratch("approach_window");
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/isomerization-two-bed.yaml";
  const auto r = run_rxtrain("run '" + demo + "' --json '" + (dir / "r.json").string() +
                             "' --report '" + (dir / "rep").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("186.79") == std::string::npos);
  CHECK(r.out.find("52.84") != std::string::npos);
  CHECK(r.out.find("(a) R1: the temperature at which X_out would be equilibrium lies more than "
                   "100 K from T_out") != std::string::npos);
  const std::string html = slurp(dir / "rep" / "report.html");
  CHECK(html.find("186.79") == std::string::npos);
  CHECK(html.find("(a) R1: the temperature") != std::string::npos);
  // JSON keeps the number (SI), flagged.
  const auto j = nlohmann::json::parse(slurp(dir / "r.json"));
  const auto& e1 = j["stages"][0]["equilibrium"];
  CHECK(e1["approach_T"].get<double>() == Approx(186.79).margin(0.01));
  CHECK(e1["approach_T_beyond_window"] == true);
  CHECK(e1["approach_T_window"] == 100.0);
  CHECK(j["stages"][2]["equilibrium"]["approach_T_beyond_window"] == false);
  // A wider window shows it.
  const auto wide = run_rxtrain("run '" + demo + "' --approach-window 200K");
  REQUIRE(wide.exit_code == 0);
  CHECK(wide.out.find("186.79") != std::string::npos);
  CHECK(wide.out.find("(a)") == std::string::npos);
  CHECK(run_rxtrain("run '" + demo + "' --approach-window 0K").exit_code == 2);
  fs::remove_all(dir);
}

TEST_CASE("optimize --margin 15K: the written case runs every peak 15 K inside T_max",
          "[cli][design]") {
  // Without a margin the demo's bed 1 ends exactly at T_max = 470 °C.
  const auto dir = scratch("optimize_margin");
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/three-bed-optimize.yaml";
  const auto r =
      run_rxtrain("optimize '" + demo + "' --margin 15K --json '" + (dir / "o.json").string() +
                  "' --write-case '" + (dir / "opt.yaml").string() + "' --report '" +
                  (dir / "rep").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("kept 15 K inside the limits") != std::string::npos);
  CHECK(r.out.find("B1.T_max = T_max - 15 K") != std::string::npos);
  const auto j = nlohmann::json::parse(slurp(dir / "o.json"));
  CHECK(j["margin"] == 15.0);
  const double T_max = j["limits"]["T_max"].get<double>();
  const double T_in_min = j["limits"]["T_in_min"].get<double>();
  CHECK(j["window"]["T_high"].get<double>() == Approx(T_max - 15).epsilon(1e-12));
  CHECK(j["window"]["T_low"].get<double>() == Approx(T_in_min + 15).epsilon(1e-12));
  const std::string html = slurp(dir / "rep" / "report.html");
  CHECK(html.find("kept 15 K inside the limits") != std::string::npos);

  // The written case, run by the train solver (CVODE, not the optimizer's
  // quadrature): every bed's hottest and coldest point lie at least 15 K
  // inside the limits (1e-3 K for the two integrations' difference;
  // measured 1e-5 K).
  const auto run = run_rxtrain("run '" + (dir / "opt.yaml").string() + "' --json '" +
                               (dir / "r.json").string() + "'");
  INFO(run.err);
  REQUIRE(run.exit_code == 0);
  const auto rj = nlohmann::json::parse(slurp(dir / "r.json"));
  int beds = 0;
  for (const auto& s : rj["stages"]) {
    if (s["type"] != "pfr") continue;
    ++beds;
    INFO(s["id"].get<std::string>());
    CHECK(s["T_peak"].get<double>() <= T_max - 15 + 1e-3);
    CHECK(s["T_min"].get<double>() >= T_in_min + 15 - 1e-3);
  }
  CHECK(beds == 3);
  CHECK(rj["conversion"].get<double>() == Approx(0.9).margin(1e-6));

  // A negative margin, a margin that is no temperature difference, and one
  // that leaves no window are input errors.
  CHECK(run_rxtrain("optimize '" + demo + "' --margin -5K").exit_code == 2);
  CHECK(run_rxtrain("optimize '" + demo + "' --margin 15bar").exit_code == 2);
  CHECK(run_rxtrain("optimize '" + demo + "' --margin 100K").exit_code == 2);
  fs::remove_all(dir);
}

TEST_CASE("optimize: bad options and unwritable outputs", "[cli][design]") {
  const auto dir = scratch("optimize_errors");
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/three-bed-optimize.yaml";
  SECTION("--beds and --max-beds exclude each other") {
    const auto r = run_rxtrain("optimize '" + demo + "' --beds 2 --max-beds 3");
    CHECK(r.exit_code == 2);
    CHECK(r.err.find("--max-beds") != std::string::npos);
  }
  SECTION("a case without target and limits is an input error") {
    const auto r = run_rxtrain("optimize '" + std::string(RXTRAIN_SOURCE_DIR) +
                               "/cases/isomerization-two-bed.yaml'");
    CHECK(r.exit_code == 2);
    CHECK(r.err.find("error: the case has no train-level target") != std::string::npos);
  }
  SECTION("an output that cannot be written leaves no other output") {
    { std::ofstream(dir / "file") << "x"; }
    // The JSON is rendered and staged first; the case cannot be written.
    const auto r = run_rxtrain("optimize '" + demo + "' --json '" + (dir / "o.json").string() +
                               "' --write-case '" + (dir / "file" / "opt.yaml").string() + "'");
    CHECK(r.exit_code == 4);
    CHECK_FALSE(fs::exists(dir / "o.json"));
  }
  fs::remove_all(dir);
}

TEST_CASE("help shows plain words, an unknown command is named", "[cli]") {
  const auto unknown = rxtrain::test::run_rxtrain("foo");
  CHECK(unknown.exit_code == 2);
  CHECK_THAT(unknown.err, Catch::Contains("unknown command 'foo'"));
  CHECK_THAT(unknown.err, Catch::Contains("run, check, thermo, staging, compare, optimize, sweep"));
  for (const char* command :
       {"run", "check", "thermo", "staging", "compare", "optimize", "sweep", "merge"}) {
    const auto help = rxtrain::test::run_rxtrain(std::string(command) + " --help");
    INFO(command << "\n" << help.out);
    CHECK(help.exit_code == 0);
    // No option-library internals: type tags, validator arrows, "[a - b]".
    for (const char* internal : {"ENUM", "FLOAT", "UINT", "INT:", "->", " TEXT REQUIRED"})
      CHECK(help.out.find(internal) == std::string::npos);
    // The library's ranges read "[1e-14 - 0.001]"; ours "[1e-14, 0.001]".
    CHECK_FALSE(std::regex_search(help.out, std::regex(R"(\[[-+.0-9e]+ - [-+.0-9e]+\])")));
  }
  const auto run = rxtrain::test::run_rxtrain("run --help");
  CHECK_THAT(run.out, Catch::Contains("case FILE REQUIRED"));
  CHECK_THAT(run.out, Catch::Contains("--json FILE"));
  CHECK_THAT(run.out, Catch::Contains("--csv DIR"));
  CHECK_THAT(run.out, Catch::Contains("--rtol NUMBER in [1e-14, 0.001]"));
  // A range whose ends are refused is shown open.
  CHECK_THAT(rxtrain::test::run_rxtrain("staging --help").out,
             Catch::Contains("--approach NUMBER in (0, 1)"));
  // thermo: lower-case option names; the old --T works, hidden.
  const auto thermo = rxtrain::test::run_rxtrain("thermo --help");
  CHECK_THAT(thermo.out, Catch::Contains("--temperatures"));
  CHECK(thermo.out.find("--T ") == std::string::npos);
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-three-bed-converter.yaml";
  const auto by_old = rxtrain::test::run_rxtrain("thermo '" + demo + "' --T 600:700:50");
  const auto by_new = rxtrain::test::run_rxtrain("thermo '" + demo + "' --temperatures 600:700:50");
  CHECK(by_old.exit_code == 0);
  CHECK(by_old.out == by_new.out);
  // thermo designs nothing: no caution.
  CHECK(by_new.out.find("Results are for screening") == std::string::npos);
}

TEST_CASE("an exchanger whose utility crosses the process temperatures is a located error",
          "[cli]") {
  // The converter's waste-heat boiler given steam at 450 degC: hotter than
  // the 430 degC the process leaves at, so no counter-flow exchanger can
  // cool the gas with it.
  const auto dir = scratch("cross");
  std::string text = slurp(std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-three-bed-converter.yaml");
  const std::string steam = "utility: {T: 250 degC}";
  const auto at = text.find(steam);
  REQUIRE(at != std::string::npos);
  text.replace(at, steam.size(), "utility: {T: 450 degC}");
  {
    std::ofstream out(dir / "cross.yaml");
    out << text;
  }
  const auto r = run_rxtrain("run '" + (dir / "cross.yaml").string() + "' --json '" +
                             (dir / "r.json").string() + "'");
  INFO(r.err);
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("cross.yaml:68:") != std::string::npos);
  CHECK(r.err.find("temperature cross") != std::string::npos);
  CHECK_FALSE(fs::exists(dir / "r.json"));
  fs::remove_all(dir);
}

TEST_CASE("a bed whose pressure would fall below a tenth of its inlet exits 3 and writes nothing",
          "[cli]") {
  // The vessels demo with its first bed made far too narrow for its flow.
  const auto dir = scratch("pressure_floor");
  std::string text = slurp(std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-converter-vessels.yaml");
  const std::string wide = "bed: {diameter: 4.5 m, void_fraction: 0.45}";
  const auto at = text.find(wide);
  REQUIRE(at != std::string::npos);
  text.replace(at, wide.size(), "bed: {diameter: 0.4 m, void_fraction: 0.45}");
  {
    std::ofstream out(dir / "narrow.yaml");
    out << text;
  }
  const auto r =
      run_rxtrain("run '" + (dir / "narrow.yaml").string() + "' --json '" +
                  (dir / "r.json").string() + "' --csv '" + (dir / "csv").string() + "'");
  INFO(r.err);
  CHECK(r.exit_code == 3);
  CHECK(r.err.find("stage B1: the pressure falls below a tenth of its inlet value") !=
        std::string::npos);
  CHECK(r.err.find("m into the bed") != std::string::npos);
  CHECK_FALSE(fs::exists(dir / "r.json"));
  CHECK_FALSE(fs::exists(dir / "csv"));
  fs::remove_all(dir);
}

TEST_CASE(
    "stability: bad --param, --points and reactors it cannot study are input errors "
    "writing nothing",
    "[cli]") {
  const auto dir = scratch("stability-bad");
  const std::string tank =
      "'" + (fs::path(RXTRAIN_SOURCE_DIR) / "cases/isomerization-tank-three-states.yaml").string() +
      "'";
  const std::string json = " --json '" + (dir / "s.json").string() + "'";
  const struct {
    std::string args, message;
  } bad[] = {
      {"stability " + tank + " --param feed.T" + json, "is not PATH=FROM:TO"},
      {"stability " + tank + " --param feed.T=330K:300K" + json, "FROM must be below TO"},
      {"stability " + tank + " --param feed.X=300K:330K" + json, "did you mean \"feed.T\""},
      {"stability " + tank + " --param feed.T=3bar:300K" + json, "cannot be converted to K"},
      {"stability " + tank + " --param feed.T=-5K:300K" + json, "out of range"},
      {"stability " + tank + " --param feed.T=300K:330K --stage R7" + json,
       "no reactor (type: cstr or pfr) with id R7"},
      {"stability " + tank + " --param feed.T=300K:330K --points 2" + json,
       "--points: error: expected a number of points from 3"},
      {"stability '" +
           (fs::path(RXTRAIN_SOURCE_DIR) / "cases/benzene-hydrogenation-bed.yaml").string() +
           "' --param feed.T=300K:330K" + json,
       "stability follows a bed of given volume"},
      {"stability '" +
           (fs::path(RXTRAIN_SOURCE_DIR) / "cases/isomerization-two-bed.yaml").string() +
           "' --stage R1 --param train.R2.activity=0.5:1" + json,
       "belongs to a stage after R1"},
  };
  for (const auto& b : bad) {
    const auto r = run_rxtrain(b.args);
    INFO(b.args << "\n" << r.err);
    CHECK(r.exit_code == 2);
    CHECK(r.err.find(b.message) != std::string::npos);
    CHECK_FALSE(fs::exists(dir / "s.json"));
  }
  const auto help = run_rxtrain("stability --help");
  CHECK(help.out.find("licensed engineers") != std::string::npos);
}

TEST_CASE("fit: bad data, paths and bounds are located input errors writing nothing", "[cli]") {
  const auto dir = scratch("fit-bad");
  const std::string lab =
      "'" + (fs::path(RXTRAIN_SOURCE_DIR) / "cases/selective-hydrogenation-lab.yaml").string() +
      "'";
  const std::string runs =
      (fs::path(RXTRAIN_SOURCE_DIR) / "cases/selective-hydrogenation-lab-runs.csv").string();
  const auto write = [&](const std::string& name, const std::string& text) {
    std::ofstream(dir / name) << text;
    return "'" + (dir / name).string() + "'";
  };
  const std::string unknown = write("unknown.csv", "feed.T,X\ndegC,-\n40,0.5\n50,0.6\n60,0.7\n");
  const std::string typo = write("typo.csv", "feed.T,Xx\n313,0.5\n");
  const std::string dims = write("dims.csv", "feed.T,X\n313,0.5\n320 bar,0.6\n");
  const std::string json = " --json '" + (dir / "f.json").string() + "'";
  const std::string free = " --free reactions.semi.rate.A,reactions.semi.rate.Ea";
  const struct {
    std::string args, message;
  } bad[] = {
      {"fit " + lab + " --data " + typo + free + json,
       "typo.csv:1:8: error: unknown column \"Xx\""},
      {"fit " + lab + " --data " + dims + free + json,
       "dims.csv:3:1: error: column feed.T needs K"},
      {"fit " + lab + " --data '" + runs + "' --free reactions.semi.rate.B" + json,
       "did you mean \"reactions.semi.rate.A\""},
      {"fit " + lab + " --data '" + runs + "'" + free +
           " --bound reactions.semi.rate.Ea=50kJ/mol:60kJ/mol" + json,
       "lies outside its bounds"},
      {"fit " + lab + " --data '" + runs + "'" + free + " --bound reactions.over.rate.Ea=1:2" +
           json,
       "is bounded but not named by --free"},
      {"fit " + lab + " --data '" + runs + "'" + free + " --sigma X=-1" + json,
       "a standard deviation must be above 0"},
      {"fit " + lab + " --data " + unknown + free + " --into x.yaml" + json,
       "give --write-case OUT.yaml too"},
  };
  for (const auto& b : bad) {
    const auto r = run_rxtrain(b.args);
    INFO(b.args << "\n" << r.err);
    CHECK(r.exit_code == 2);
    CHECK(r.err.find(b.message) != std::string::npos);
    CHECK_FALSE(fs::exists(dir / "f.json"));
  }
  const auto help = run_rxtrain("fit --help");
  CHECK(help.out.find("licensed engineers") != std::string::npos);
}
