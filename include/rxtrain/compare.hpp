// Layouts of a train compared: every order of its reactor stages, each
// with the heat modes as written, all adiabatic, and all isothermal at the
// feed temperature. Exchangers keep their positions between reactor
// stages. A stage with a volume (or catalyst mass) carries it to its new
// position; conversion targets stay with their positions, so a sized train
// keeps its sequence of intermediate conversions and the reactors (type,
// heat, bulk density) move between them.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case.hpp"
#include "rxtrain/train.hpp"

namespace rxtrain {

enum class LayoutHeat { AsWritten, Adiabatic, Isothermal };

// "as-written", "adiabatic", "isothermal".
const char* layout_heat_name(LayoutHeat heat);

struct CompareOptions {
  // Equilibrium views are switched off inside; limit_check sets the margin
  // of the notes.
  TrainOptions train;
  // Orders grow as n!; 6 reactor stages give 720 orders (x3 heat modes).
  int max_reactor_stages = 6;
};

struct Layout {
  std::vector<std::string> order;  // reactor-stage ids in train order
  LayoutHeat heat = LayoutHeat::AsWritten;
  bool case_layout = false;  // the case exactly as written
  bool feasible = false;
  // Why not, when infeasible; a layout whose stage passes the case's
  // limits (limit_check.hpp) is infeasible, with every such stage's
  // finding here.
  std::string reason;
  // Stages of a feasible layout within the margin of a limit (Near
  // findings), phrased.
  std::vector<std::string> notes;
  std::optional<double> total_volume;    // m3
  std::optional<double> total_catalyst;  // kg, when every reactor has one
  std::optional<double> conversion;      // overall key conversion at the outlet
  std::optional<double> T_max;           // K, hottest point of the train
};

struct CompareResult {
  // True when any reactor stage is sized to a target: layouts rank by the
  // smallest total catalyst (or volume, for per-volume rates); otherwise
  // by the highest final conversion.
  bool sized = false;
  bool catalyst_objective = false;  // ranked by catalyst mass, not volume
  std::vector<Layout> layouts;      // best first, infeasible last
};

// Throws InputError when the train has more reactor stages than
// options.max_reactor_stages (or none).
CompareResult compare_layouts(const Case& c, const CompareOptions& options = {});

}  // namespace rxtrain
