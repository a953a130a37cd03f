// Reports of the interstage-cooling check (staging.hpp).
//
// format_staging_report: the terminal answer in plain words and tables
// (°C with two decimals, conversions with four, volumes m3, catalyst kg,
// duties kW), with the warnings and the caution.
//
// staging_json / staging_json_text: SI only. Layout:
//   {"title", "key", "target", "limits": {"T_max", "T_in_min"},
//    "reaction": "exothermic"|"endothermic", "dT_ad",
//    "reachable": bool, "limited_by": "equilibrium"|"T_max"|"T_in_min"|"size"|null,
//    "limiting_stage": id|null, "why", "limit_point": {"X", "V", "T", "beyond_bed"}|null,
//    "volume_needed": m3|null, "as_given_conversion",
//    "as_given": [{"id", "type", "ran", "T_in", "T_out", "T_max", "T_min", "X_in", "X_out",
//                  "volume", "X_ad_eq", "T_ad_eq", "note"}],
//    "target_reached": bool, "beds_needed": N|null, "staged_conversion",
//    "conversion_limit", "staged_note",
//    "policy": {"approach", "return_to": "inlet"|"max-rate", "min_return" (max-rate;
//               else null), "max_beds"},
//    "beds": [{"id", "T_in", "T_out", "X_in", "X_out", "volume", "catalyst_mass", "T_max",
//              "T_min", "X_ad_eq", "T_ad_eq", "ended_by" ("approach"|"floor"|"T_max"|
//              "T_in_min"|"target"), "path": [{"T", "X"}]}],
//    "coolers": [{"id", "T_in", "T_out", "duty"}],
//    "warnings": [...], "caution"}
// A value that does not apply (or is not finite) is null; "T_in_min" in
// limited_by is the endothermic counterpart of "T_max".
#pragma once

#include <nlohmann/json.hpp>
#include <string>

#include "rxtrain/studies/staging.hpp"

namespace rxtrain {

std::string format_staging_report(const StagingResult& result);

// The answers in words, the same in every report (staging_words.cpp):
// whether the train as given reaches the target and what limits it;
std::string as_given_answer_text(const StagingResult& result);
// what limits stage `a` of the train as given ("" when nothing does);
std::string stage_note_text(const StagingResult& result, const AsGivenStage& a);
// whether interstage cooling (heating) is needed, and how many beds.
std::string staged_answer_text(const StagingResult& result);

nlohmann::json staging_json(const StagingResult& result);
// Text form written by --json (two-space indent, trailing newline).
std::string staging_json_text(const StagingResult& result);

}  // namespace rxtrain
