// The compact terminal summary of a train run: the numbers an engineer reads
// first, in display units (°C, kPa/bar, m3, kg, kW) named in the headers.
#pragma once

#include <string>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

std::string format_stage_table(const TrainResult& result);

}  // namespace rxtrain
