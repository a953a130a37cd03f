// The compact terminal summary of a train run: the numbers an engineer reads
// first, in display units (°C, kPa/bar, m3, kg, kW) named in the headers.
#pragma once

#include <string>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

std::string format_stage_table(const TrainResult& result);

// The beds table of the stages with a bed or tubes (diameter, length,
// flux, velocities, particle Reynolds, pressures and dP); empty when no
// stage has one.
std::string bed_columns(const TrainResult& result);

}  // namespace rxtrain
