// How a stage's energy balance closes: no heat crosses its wall
// (adiabatic: the temperature moves with the reactions), or it runs at its
// inlet temperature (isothermal: the heat of reaction is taken out or put
// in, the stage's duty).
#pragma once

namespace rxtrain {

enum class HeatMode { Adiabatic, Isothermal };

}  // namespace rxtrain
