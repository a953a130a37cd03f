// Words for the optimizer's active limits and optimality conditions
// (design.hpp), shared by the terminal table, the JSON and the report, so
// that every screen says the same thing: which conditions hold at each
// exchanger and bed, from the computed residuals, and which limit exempts
// the ones that do not.
//
// Example:
//   for (const auto& c : d.best.interstage) out += interstage_text(d, d.best, c) + "\n";
#pragma once

#include <string>
#include <vector>

#include "rxtrain/studies/optimize.hpp"

namespace rxtrain {

// "B1.T_max = T_max", "B2.T_in = T_in_min + 15 K", "B1.T_in = T_feed (fixed)",
// "B2.T_min = T_in_min" (endothermic), "B1.X_out = X_ad_eq".
std::string active_limit_text(const DesignResult& d, const DesignLayout& l, const ActiveLimit& a);
// "holds", "limited", "missed", "not computed".
const char* condition_state_name(ConditionState s);
// One line on the equal-rate condition across an exchanger.
std::string interstage_text(const DesignResult& d, const DesignLayout& l,
                            const InterstageCondition& c);
// One line on the inlet-temperature condition of a bed.
std::string inlet_text(const DesignResult& d, const DesignLayout& l, const InletCondition& c);
// Sentences for a figure caption: where the equal-rate rule holds, and
// where a limit (or an optimizer stopped short) breaks it. Empty with one bed.
std::string interstage_summary(const DesignResult& d, const DesignLayout& l);
// "the window T_in_min 300.00 °C to T_max 470.00 °C" or, with a margin,
// "... kept 15 K inside the limits: 315.00 °C to 455.00 °C".
std::string window_text(const DesignResult& d);
// What keeps the case as written from comparison (it does not run, misses
// the target, leaves the window or passes a limit); "" when nothing does
// or it was not compared.
std::string as_written_text(const DesignResult& d);
// The staging policy's answer in words (staged_answer_text); "" when it was
// not compared.
std::string staging_policy_text(const DesignResult& d);
// The warnings of the optimum: the result's own, then a disagreement of
// the check, the optimum's limit findings, the adiabatic rise past T_max.
// The optimum rerun with its beds' pressure drop falls short of the target.
bool pressure_drop_short(const DesignResult& d);
std::vector<std::string> optimize_warnings(const DesignResult& d);

}  // namespace rxtrain
