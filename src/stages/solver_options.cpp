#include "rxtrain/stages/solver_options.hpp"

namespace rxtrain {

CstrOptions SolverOptions::tank() const {
  CstrOptions o;
  o.newton = newton;
  o.continuation_steps = tank_continuation_steps;
  o.distinct_T = tank_distinct_T;
  o.pfr = tube;
  return o;
}

std::string SolverOptions::validate() const {
  if (auto e = tube.cvode.validate(); !e.empty()) return "tube.cvode: " + e;
  if (!(tube.max_space_time > 0)) return "tube.max_space_time must be above zero";
  if (tank_continuation_steps < 1) return "tank_continuation_steps must be at least 1";
  if (!(tank_distinct_T > 0)) return "tank_distinct_T must be above zero";
  if (auto e = equilibrium.validate(); !e.empty()) return "equilibrium: " + e;
  return {};
}

}  // namespace rxtrain
