// rxtrain check CASE: load and validate without running.
#include <fmt/format.h>

#include <cstdio>
#include <memory>
#include <string>

#include "commands.hpp"
#include "rxtrain/case.hpp"
#include "rxtrain/error.hpp"
#include "rxtrain/units.hpp"

namespace rxtrain::cli {

Action setup_check(CLI::App& app) {
  auto file = std::make_shared<std::string>();
  app.add_option("case", *file, "Case file (YAML)")->required();
  return [file] {
    const UnitParser units;
    const Case c = load_case(*file, units);
    for (const auto& w : c.warnings)
      std::fprintf(stderr, "%s\n", format_diagnostic({*file, 0, 0}, "warning", w).c_str());
    std::printf("%s: ok: %d species, %d reactions, %zu stages\n", file->c_str(),
                c.mechanism.n_species(), c.mechanism.n_reactions(), c.train.size());
    return 0;
  };
}

}  // namespace rxtrain::cli
