#include "rxtrain/report/approach_text.hpp"

#include <fmt/format.h>

#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

std::string approach_T_cell(const StageResult& r) {
  if (!r.equilibrium) return "-";
  if (r.equilibrium->approach_T_beyond_window) return kApproachMark;
  return fixed_text(r.equilibrium->approach_T, 2);
}

std::string approach_T_footnote(const TrainResult& r) {
  std::string ids;
  double window = 0;
  for (const auto& s : r.stages)
    if (s.equilibrium && s.equilibrium->approach_T_beyond_window) {
      ids += (ids.empty() ? "" : ", ") + s.id;
      window = s.equilibrium->approach_T_window;
    }
  if (ids.empty()) return {};
  return fmt::format(
      "{} {}: the temperature at which X_out would be equilibrium lies more than {:g} K from "
      "T_out (--approach-window): the equilibrium constant changes too little with temperature "
      "there for a temperature approach to mean much; read X_eq(T_out) - X instead (the JSON "
      "keeps the figure)",
      kApproachMark, ids, window);
}

}  // namespace rxtrain
