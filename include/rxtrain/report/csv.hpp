// Spreadsheet output, SI units (unit in every column header).
//   stages.csv:   one row per stage (empty cell where a field does not apply)
//   profiles.csv: every stage's internal profile: stage, position, T, P,
//                 conversion, each molar flow
//   paths.csv:    the temperature-conversion diagram's curves, one point a
//                 row: curve (path | equilibrium | max_rate), stage, T, X
//   levenspiel.csv: each reactor stage's F_key,feed/(-r_key) against X,
//                 one point a row (basis volume_m3 | catalyst_kg), then a
//                 row with only the stage's area
#pragma once

#include <string>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

std::string stages_csv(const TrainResult& result);
std::string profiles_csv(const TrainResult& result);
std::string paths_csv(const TrainResult& result);
std::string levenspiel_csv(const TrainResult& result);

}  // namespace rxtrain
