// Interstage cooler or heater (no reaction, no pressure drop): outlet at a
// given temperature (duty reported) or after a given duty (T solved).
#pragma once

#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

StageResult run_exchanger(const Mechanism& mech, const ExchangerSpec& spec, const Stream& inlet,
                          const ConversionBasis& basis);

}  // namespace rxtrain
