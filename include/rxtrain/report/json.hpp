// The whole result of a train run as JSON, SI units only. Layout:
//   {"title", "species": [ids], "key", "feed": STREAM, "conversion",
//    "stages": [{"id", "type", "heat", "sized", "volume", "catalyst_mass",
//                "bulk_density", "space_time", "space_velocity", "ghsv", "whsv",
//                "lhsv", "duty", "T_max", "T_min", "conversion", "inlet": STREAM,
//                "outlet": STREAM, "steady_states": [...], "profile": {...},
//                "solver": {...}, "warnings": [...],
//                "equilibrium": {"X_ad_eq", "T_ad_eq", "X_eq_out", "approach_X",
//                                "approach_T", "approach_T_beyond_window",
//                                "approach_T_window"} | null,
//                "path": [{"T", "X"}, ...]}],
//    "outlet": STREAM, "equilibrium_curve": [{"T", "X_eq"}, ...],
//    "max_rate_locus": [{"X", "T_opt"}, ...],
//    "levenspiel": [{"stage", "basis": "volume" | "catalyst", "rectangle",
//                    "X_in", "X_out", "area", "points": [{"X",
//                    "inverse_rate"}, ...]}], "warnings": [...], "caution"}
// STREAM = {"T", "P", "flows": {id: mol/s}}. Fields that do not apply are
// null. GHSV, WHSV and LHSV are in 1/h as the trade quotes them; every
// other value is SI.
#pragma once

#include <nlohmann/json.hpp>

#include "rxtrain/train.hpp"

namespace rxtrain {

nlohmann::json to_json(const TrainResult& result);

// Text form written by --json (two-space indent, trailing newline).
std::string json_text(const TrainResult& result);

}  // namespace rxtrain
