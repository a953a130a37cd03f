// Spreadsheet output, SI units (unit in every column header).
//   stages.csv:   one row per stage (empty cell where a field does not apply),
//                 its outlet's mass flow and mass balance (in - out) / in
//   streams.csv:  the feed and every stage's outlet: T, P, total molar and
//                 mass flow, each molar flow, each mole fraction y
//   profiles.csv: every stage's internal profile: stage, position, T, P,
//                 conversion, each molar flow
//   paths.csv:    the temperature-conversion diagram's curves, one point a
//                 row: curve (path | equilibrium | max_rate), stage, T, X
//   levenspiel.csv: each reactor stage's F_key,feed/(-r_key) against X,
//                 one point a row, then a row with only the stage's area
//                 under that curve; both in the `unit` column's unit: kg
//                 (rates per kg of catalyst) or m3 (per volume)
#pragma once

#include <string>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

std::string stages_csv(const TrainResult& result);
std::string streams_csv(const TrainResult& result);
std::string profiles_csv(const TrainResult& result);
std::string paths_csv(const TrainResult& result);
std::string levenspiel_csv(const TrainResult& result);

}  // namespace rxtrain
