// The command line as users run it: every demo case, outputs, exit codes.
#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

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
      // Each stage is fed by the one before, and the train outlet is the last stage's.
      for (std::size_t i = 1; i < j["stages"].size(); ++i)
        CHECK(j["stages"][i]["inlet"] == j["stages"][i - 1]["outlet"]);
      CHECK(j["outlet"] == j["stages"].back()["outlet"]);
      for (const auto& s : j["stages"])
        CHECK(s["T_max"].get<double>() >= s["outlet"]["T"].get<double>() - 1e-9);
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
  {
    std::ofstream(dir / "readme.yaml") << readme.substr(start + 8, end - start - 8);
  }
  const auto r = run_rxtrain("run '" + (dir / "readme.yaml").string() + "'");
  INFO(r.err);
  CHECK(r.exit_code == 0);
  fs::remove_all(dir);
}
