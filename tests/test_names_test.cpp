// ctest runs each Catch test by its name, passed through a CMake list: a
// ';' in a name splits it, the truncated name matches no test, and Catch
// reports "No tests ran" with success. Such a test can never fail, so no
// name may hold one. (Found when seven tests had been passing unrun.)
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>
#include <string>
#include <vector>

namespace fs = std::filesystem;

TEST_CASE("no test name holds a semicolon, which would keep ctest from running it", "[tests]") {
  const std::regex name(R"re(TEST_CASE\(\s*"([^"]*)")re");
  int names = 0;
  std::vector<std::string> bad;
  for (const auto& e : fs::recursive_directory_iterator(fs::path(RXTRAIN_SOURCE_DIR) / "tests")) {
    if (!e.is_regular_file() || e.path().extension() != ".cpp") continue;
    std::ifstream in(e.path());
    std::ostringstream s;
    s << in.rdbuf();
    const std::string text = s.str();
    for (std::sregex_iterator m(text.begin(), text.end(), name), stop; m != stop; ++m) {
      ++names;
      if ((*m)[1].str().find(';') != std::string::npos)
        bad.push_back(e.path().filename().string() + ": " + (*m)[1].str());
    }
  }
  CHECK(names > 200);
  for (const auto& b : bad) UNSCOPED_INFO(b);
  CHECK(bad.empty());
}
