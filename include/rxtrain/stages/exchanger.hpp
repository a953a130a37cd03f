// Interstage cooler or heater (no reaction, no pressure drop): outlet at a
// given temperature (duty reported) or after a given duty (T solved).
#pragma once

#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

StageResult run_exchanger(const Mechanism& mech, const ExchangerSpec& spec, const Stream& inlet,
                          const ConversionBasis& basis);

// Temperature at which sum_i F_i hs_i(T) equals `enthalpy_flow` (W),
// starting near T_guess. Throws SolverError when no such T exists.
double temperature_for_enthalpy(const Mechanism& mech, const std::vector<double>& F,
                                double enthalpy_flow, double T_guess);

}  // namespace rxtrain
