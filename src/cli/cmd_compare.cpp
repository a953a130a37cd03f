// rxtrain compare CASE [--json PATH]
#include <fmt/format.h>

#include <cmath>
#include <cstdio>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>

#include "commands.hpp"
#include "rxtrain/case.hpp"
#include "rxtrain/compare.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/units.hpp"

namespace rxtrain::cli {

namespace {

struct CompareCommandOptions {
  std::string case_file;
  std::string json_path;
  double rtol = CvodeOptions{}.rtol;
};

nlohmann::json number(const std::optional<double>& v) {
  return v && std::isfinite(*v) ? nlohmann::json(*v) : nlohmann::json(nullptr);
}

std::string compare_json_text(const CompareResult& r) {
  nlohmann::json layouts = nlohmann::json::array();
  for (const auto& l : r.layouts)
    layouts.push_back({{"order", l.order},
                       {"heat", layout_heat_name(l.heat)},
                       {"case_layout", l.case_layout},
                       {"feasible", l.feasible},
                       {"reason", l.feasible ? nlohmann::json(nullptr) : nlohmann::json(l.reason)},
                       {"total_volume", number(l.total_volume)},
                       {"total_catalyst", number(l.total_catalyst)},
                       {"conversion", number(l.conversion)},
                       {"T_max", number(l.T_max)}});
  return nlohmann::json{{"layouts", layouts}}.dump(2) + "\n";
}

std::string cell(const std::optional<double>& v, const char* f) {
  return v && std::isfinite(*v) ? fmt::format(fmt::runtime(f), *v) : std::string("-");
}

std::string compare_table(const CompareResult& r) {
  std::string out =
      r.sized ? fmt::format("Layouts, best first (smallest total {}); * = the case as written\n",
                            r.catalyst_objective ? "catalyst" : "volume")
              : "Layouts, best first (highest final conversion); * = the case as written\n";
  out += fmt::format("{:>1} {:>4}  {:<28} {:<11} {:>12} {:>13} {:>10} {:>9}  {}\n", "", "rank",
                     "order", "heat", "volume_m3", "catalyst_kg", "conversion", "T_max_K",
                     "infeasible because");
  int rank = 0;
  for (const auto& l : r.layouts) {
    std::string order;
    for (const auto& id : l.order) order += (order.empty() ? "" : " > ") + id;
    out += fmt::format("{:>1} {:>4}  {:<28} {:<11} {:>12} {:>13} {:>10} {:>9}  {}\n",
                       l.case_layout ? "*" : "", l.feasible ? std::to_string(++rank) : "-", order,
                       layout_heat_name(l.heat), cell(l.total_volume, "{:.4g}"),
                       cell(l.total_catalyst, "{:.5g}"), cell(l.conversion, "{:.5f}"),
                       cell(l.T_max, "{:.1f}"), l.feasible ? "" : l.reason);
  }
  return out;
}

int run_compare_command(const CompareCommandOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  CompareOptions options;
  options.train.pfr.cvode.rtol = o.rtol;
  options.train.cstr.pfr.cvode.rtol = o.rtol;
  const CompareResult result = compare_layouts(c, options);
  // Rendered before anything is written; a failure leaves no file behind.
  OutputSet out;
  out.protect(o.case_file);
  if (!o.json_path.empty()) out.add(o.json_path, compare_json_text(result));
  out.commit();
  std::fputs(compare_table(result).c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_compare(CLI::App& app) {
  auto o = std::make_shared<CompareCommandOptions>();
  app.add_option("case", o->case_file, "Case file (YAML)")->required();
  app.add_option("--json", o->json_path, "Write every layout, best first, as JSON (SI) to PATH");
  app.add_option("--rtol", o->rtol, "Relative tolerance of the ODE integrator")
      ->check(CLI::Range(1e-14, 1e-3))
      ->capture_default_str();
  return [o] { return run_compare_command(*o); };
}

}  // namespace rxtrain::cli
