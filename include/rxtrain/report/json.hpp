// The whole result of a train run as JSON, SI units only. Layout:
//   {"title", "species": [ids], "key", "feed": STREAM, "conversion",
//    "products": [ids], "yield": {P: Y} | null, "selectivity": {P: S | null} | null,
//    "stages": [{"id", "type", "heat", "sized", "volume", "catalyst_mass",
//                "bulk_density", "space_time", "space_velocity", "ghsv", "whsv",
//                "lhsv", "space_velocity_basis": [ids], "duty", "T_max", "T_min",
//                "conversion", "yield", "selectivity" (as the train's, cumulative
//                from the feed), "inlet": STREAM,
//                "outlet": STREAM, "steady_states": [...], "profile": {...},
//                "solver": {...}, "warnings": [...],
//                "equilibrium": {"X_ad_eq", "T_ad_eq", "X_eq_out", "approach_X",
//                                "approach_T", "approach_T_beyond_window",
//                                "approach_T_window"} | null,
//                "path": [{"T", "X"}, ...],
//                "limit": LIMIT | null}],
//    "outlet": STREAM, "equilibrium_curve": [{"T", "X_eq"}, ...],
//    "max_rate_locus": [{"X", "T_opt"}, ...],
//    "levenspiel": [{"stage", "basis": "volume" | "catalyst", "rectangle",
//                    "X_in", "X_out", "area", "points": [{"X",
//                    "inverse_rate"}, ...]}], "warnings": [...], "caution"}
// STREAM = {"T", "P", "flows": {id: mol/s}, "total_flow", "x": {id: mole
// fraction}, "mass_flows": {id: kg/s} | null, "mass_flow" | null}.
// LIMIT (limit_check.hpp) =
//   {"T_max", "T_in_min", "margin", "over_limit": K beyond the limits (0
//    within), "findings": [{"kind": "over" | "under" | "near", "bound":
//    "T_max" | "T_in_min", "limit", "T", "by", "at_inlet", "V",
//    "catalyst_mass", "message"}]},
// null for an exchanger or a case without limits. Fields that do not apply are
// null. GHSV, WHSV and LHSV are in 1/h as the trade quotes them; every
// other value is SI. "space_velocity_basis" names the species whose inlet
// flows WHSV and LHSV are on (every species: the whole stream; empty where
// the stage has none, e.g. an exchanger).
#pragma once

#include <nlohmann/json.hpp>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

nlohmann::json to_json(const TrainResult& result);

// LIMIT above: stage `r` against the limit check `lc` of its train.
nlohmann::json limit_json(const LimitCheck& lc, const StageResult& r);
// A whole train's check: {"T_max", "T_in_min", "margin", "findings": [...]},
// each finding as in LIMIT with its "stage" id.
nlohmann::json limit_check_json(const LimitCheck& lc);

// Text form written by --json (two-space indent, trailing newline).
std::string json_text(const TrainResult& result);

}  // namespace rxtrain
