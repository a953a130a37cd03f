// The bad-input catalogue: every tests/bad_cases/NN-name.yaml is a small
// complete case with exactly one fault and a first line
//   # expect: exit=2 line=L contains="substring"
// (L: the line of the error in that file; \" and \\ escape inside the
// quotes). Each file is loaded directly and through `rxtrain check`.
#include <algorithm>
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <optional>
#include <regex>
#include <string>
#include <vector>

#include "run_command.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"

using namespace rxtrain;

namespace {

struct Expectation {
  std::string path;
  int exit_code = 0;
  int line = 0;
  std::string contains;
};

std::optional<Expectation> read_expectation(const std::filesystem::path& file) {
  std::ifstream in(file);
  std::string first;
  std::getline(in, first);
  const std::regex header(
      R"re(^# expect: exit=(\d+) line=(\d+) contains="((?:[^"\\]|\\.)*)"\s*$)re");
  std::smatch m;
  if (!std::regex_match(first, m, header)) return std::nullopt;
  Expectation e;
  e.path = file.string();
  e.exit_code = std::stoi(m[1]);
  e.line = std::stoi(m[2]);
  const std::string raw = m[3];
  for (std::size_t i = 0; i < raw.size(); ++i) {
    if (raw[i] == '\\' && i + 1 < raw.size()) ++i;
    e.contains += raw[i];
  }
  return e;
}

std::vector<std::filesystem::path> bad_case_files() {
  std::vector<std::filesystem::path> files;
  for (const auto& entry :
       std::filesystem::directory_iterator(std::string(RXTRAIN_SOURCE_DIR) + "/tests/bad_cases"))
    if (entry.path().extension() == ".yaml") files.push_back(entry.path());
  std::sort(files.begin(), files.end());
  return files;
}

std::vector<Expectation> catalogue() {
  std::vector<Expectation> out;
  for (const auto& f : bad_case_files()) {
    const auto e = read_expectation(f);
    INFO(f.string());
    REQUIRE(e.has_value());  // every file states what it expects
    out.push_back(*e);
  }
  return out;
}

}  // namespace

TEST_CASE("the bad-case catalogue covers at least 24 faults", "[bad-cases]") {
  const auto cases = catalogue();
  CHECK(cases.size() >= 24);
  for (const auto& e : cases) {
    INFO(e.path);
    CHECK(e.exit_code == 2);
    CHECK(e.line > 1);  // line 1 is the expectation itself
    CHECK_FALSE(e.contains.empty());
  }
}

TEST_CASE("load_case refuses every bad case at the expected line", "[bad-cases]") {
  const UnitParser units;
  for (const auto& e : catalogue()) {
    INFO(e.path);
    try {
      load_case(e.path, units);
      FAIL_CHECK("loaded without error");
    } catch (const InputError& err) {
      INFO(err.what());
      CHECK(err.where().file == e.path);
      CHECK(err.where().line == e.line);
      CHECK(err.where().column > 0);
      CHECK_THAT(err.message(), Catch::Contains(e.contains));
      CHECK_THAT(std::string(err.what()),
                 Catch::StartsWith(e.path + ":" + std::to_string(e.line) + ":"));
    }
  }
}

TEST_CASE("rxtrain check exits 2 with a located message for every bad case", "[bad-cases]") {
  for (const auto& e : catalogue()) {
    INFO(e.path);
    const auto r = test::run_rxtrain("check '" + e.path + "'");
    INFO("stderr: " << r.err);
    CHECK(r.exit_code == e.exit_code);
    CHECK_THAT(r.err, Catch::Contains(e.path + ":" + std::to_string(e.line) + ":"));
    CHECK_THAT(r.err, Catch::Contains(e.contains));
  }
}
