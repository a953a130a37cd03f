#include "rxtrain/report/table.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <optional>
#include <vector>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/report/approach_text.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

std::string format_stage_table(const TrainResult& result) {
  std::string out;
  out += result.title + "\n";
  const double Ft = result.feed.total_flow();
  out +=
      fmt::format("feed {} °C, {} bar, {} mol/s; key species {}\n\n", celsius_text(result.feed.T),
                  fixed_text(result.feed.P / 1e5, 3), fmt::format("{:.4g}", Ft), result.key);

  std::vector<std::vector<std::string>> rows;
  rows.push_back({"stage", "type", "heat", "V m3", "cat kg", "tau s", "T in °C", "T out °C",
                  "T max °C", "X out", "X eq-X", "T eq-T K", "duty kW"});
  bool any_sized = false;
  for (const auto& r : result.stages) {
    std::string heat = "-";
    if (r.heat) heat = heat_mode_name(*r.heat);
    std::string V = fixed_text(r.volume, 3);
    if (r.sized) {
      V += "*";
      any_sized = true;
    }
    rows.push_back({r.id, stage_kind_name(r.kind), heat, V, fixed_text(r.catalyst_mass, 1),
                    sig_text(r.space_time), celsius_text(r.inlet.T), celsius_text(r.outlet.T),
                    celsius_text(r.T_max), fixed_text(r.conversion, 4),
                    r.equilibrium ? fixed_text(r.equilibrium->approach_X, 4) : "-",
                    approach_T_cell(r), fixed_text(r.duty / 1e3, 2)});
  }
  out += render_columns(rows, 3);
  if (any_sized) out += "* volume found from the stage's target conversion\n";
  bool any_eq = false;
  for (const auto& r : result.stages) any_eq = any_eq || r.equilibrium.has_value();
  if (any_eq) {
    out +=
        "X eq-X, T eq-T: approach to equilibrium at the outlet (X_eq(T_out) - X_out; the "
        "temperature at which X_out is equilibrium, minus T_out)\n";
    if (const auto note = approach_T_footnote(result); !note.empty()) out += note + "\n";
  }
  for (const auto& r : result.stages)
    if (r.reach && r.heat) out += "  " + reach_sentence(r, result.species) + "\n";

  // Space velocities only where they apply (GHSV at 0 °C, 1 atm).
  // WHSV and LHSV on the case's space_velocity_basis, named once when every
  // stage has the same (as a case gives them), else per stage.
  std::vector<std::vector<std::string>> sv;
  std::vector<std::string> bases;
  for (const auto& r : result.stages)
    if (r.ghsv || r.whsv || r.lhsv) {
      sv.push_back({r.id, sig_text(r.ghsv), sig_text(r.whsv), sig_text(r.lhsv)});
      bases.push_back(space_velocity_basis_text(r.space_velocity_basis, result.species));
    }
  if (!sv.empty()) {
    const bool one_basis = std::all_of(bases.begin(), bases.end(),
                                       [&](const std::string& b) { return b == bases.front(); });
    sv.insert(sv.begin(), {"stage", "GHSV 1/h", "WHSV 1/h", "LHSV 1/h"});
    if (!one_basis) {
      sv.front().push_back("WHSV, LHSV on");
      for (std::size_t i = 1; i < sv.size(); ++i) sv[i].push_back(bases[i - 1]);
    }
    out += fmt::format(
        "\nspace velocities (GHSV: the whole gas at 0 °C and 1 atm; WHSV and LHSV: {} at the "
        "stage inlet, LHSV as liquid at the species' densities)\n",
        one_basis ? "on " + bases.front() : std::string("on the flows named per stage"));
    out += render_columns(sv, 1);
  }

  out += fmt::format("\noutlet: {} °C, {} bar, overall conversion of {} = {}\n",
                     celsius_text(result.outlet.T), fixed_text(result.outlet.P / 1e5, 3),
                     result.key, fixed_text(result.conversion, 4));
  std::vector<std::vector<std::string>> fl;
  fl.push_back({"species", "feed mol/s", "outlet mol/s"});
  for (std::size_t i = 0; i < result.species.size(); ++i)
    fl.push_back({result.species[i], fmt::format("{:.5g}", result.feed.F[i]),
                  fmt::format("{:.5g}", std::max(0.0, result.outlet.F[i]))});
  out += render_columns(fl, 1);

  if (!result.warnings.empty()) {
    out += "\nwarnings:\n";
    for (const auto& w : result.warnings) out += "  - " + w + "\n";
  }
  out += fmt::format("\n{}\n", kCaution);
  return out;
}

}  // namespace rxtrain
