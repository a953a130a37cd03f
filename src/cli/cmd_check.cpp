// rxtrain check CASE: load and validate without running.
#include <fmt/format.h>

#include <cstdio>
#include <memory>
#include <string>

#include "commands.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"

namespace rxtrain::cli {

Action setup_check(CLI::App& app) {
  auto file = std::make_shared<std::string>();
  app.add_option("case", *file, "Case file (YAML)")->required();
  return [file] {
    const UnitParser units;
    const Case c = load_case(*file, units);
    for (const auto& w : c.warnings)
      std::fprintf(stderr, "%s\n", format_diagnostic({*file, 0, 0}, "warning", w).c_str());
    const auto count = [](std::size_t n, const char* one, const char* many) {
      return fmt::format("{} {}", n, n == 1 ? one : many);
    };
    std::printf(
        "%s: ok: %d species, %s, %s\n", file->c_str(), c.mechanism.n_species(),
        count(static_cast<std::size_t>(c.mechanism.n_reactions()), "reaction", "reactions").c_str(),
        count(c.train.size(), "stage", "stages").c_str());
    return 0;
  };
}

}  // namespace rxtrain::cli
