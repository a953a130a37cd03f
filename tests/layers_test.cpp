// The folders are the layers (docs/architecture.md): no file includes a
// header of a layer above its own. The order is read from the ```layers
// block of docs/architecture.md, so the document and the check cannot drift.
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <map>
#include <regex>
#include <sstream>
#include <string>
#include <vector>

namespace fs = std::filesystem;

namespace {

std::string read(const fs::path& p) {
  std::ifstream in(p);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

std::map<std::string, int> layer_ranks() {
  const std::string doc = read(fs::path(RXTRAIN_SOURCE_DIR) / "docs" / "architecture.md");
  const auto start = doc.find("```layers\n");
  REQUIRE(start != std::string::npos);
  const auto end = doc.find("```", start + 10);
  REQUIRE(end != std::string::npos);
  std::istringstream lines(doc.substr(start + 10, end - start - 10));
  std::map<std::string, int> rank;
  std::string name;
  while (std::getline(lines, name))
    if (!name.empty()) rank.emplace(name, static_cast<int>(rank.size()));
  return rank;
}

}  // namespace

TEST_CASE("no header of a lower layer includes a higher one", "[layers]") {
  const auto rank = layer_ranks();
  REQUIRE(rank.size() >= 10);
  const std::regex include(R"re(#include "rxtrain/([a-z_]+)/)re");
  int files = 0;
  std::vector<std::string> violations;
  for (const char* top : {"include/rxtrain", "src"}) {
    const fs::path root = fs::path(RXTRAIN_SOURCE_DIR) / top;
    for (const auto& e : fs::recursive_directory_iterator(root)) {
      const auto ext = e.path().extension();
      if (!e.is_regular_file() || (ext != ".cpp" && ext != ".hpp")) continue;
      const std::string layer = fs::relative(e.path(), root).begin()->string();
      // Every source file lives in a layer's folder.
      INFO(e.path().string());
      REQUIRE(rank.count(layer) == 1);
      ++files;
      const std::string text = read(e.path());
      for (std::sregex_iterator m(text.begin(), text.end(), include), stop; m != stop; ++m) {
        const std::string used = (*m)[1];
        if (rank.count(used) == 0 || rank.at(used) > rank.at(layer))
          violations.push_back(fs::relative(e.path(), RXTRAIN_SOURCE_DIR).string() + " (layer " +
                               layer + ") includes rxtrain/" + used + "/");
      }
    }
  }
  CHECK(files > 100);
  for (const auto& v : violations) UNSCOPED_INFO(v);
  CHECK(violations.empty());
}

// docs/architecture.md: "reporters never solve". A reporter takes results
// and phrases them; no call of a solver or of a study may appear in report/.
TEST_CASE("no reporter calls a solver or runs a study", "[layers]") {
  const std::regex call(
      R"re(\b(run_train|run_train_batch|run_stage|run_pfr|run_pfr_batch|run_cstr|run_exchanger|add_equilibrium_views|run_staging|optimize_design|compare_layouts|run_sweep|run_checked)\s*\()re");
  std::vector<std::string> found;
  for (const char* top : {"src/report", "include/rxtrain/report"})
    for (const auto& e : fs::recursive_directory_iterator(fs::path(RXTRAIN_SOURCE_DIR) / top)) {
      if (!e.is_regular_file()) continue;
      const std::string text = read(e.path());
      for (std::sregex_iterator m(text.begin(), text.end(), call), stop; m != stop; ++m)
        found.push_back(e.path().filename().string() + ": " + (*m)[1].str());
    }
  for (const auto& f : found) UNSCOPED_INFO(f);
  CHECK(found.empty());
}
