// A chemical species as the case declares it. SI units throughout.
#pragma once

#include <optional>
#include <string>

#include "rxtrain/chem/formula.hpp"
#include "rxtrain/chem/thermo.hpp"

namespace rxtrain {

struct Species {
  std::string id;                        // used in equations; unique
  std::string name;                      // display name (defaults to id)
  std::optional<ElementCounts> formula;  // enables element balances
  std::optional<double> mw;              // kg/mol
  ThermoModel thermo;                    // cp, h, s
  std::optional<double> density;         // kg/m3 (liquid phase; LHSV)

  // Molar volume as a liquid, MW / rho (m3/mol), when both are given. A
  // liquid mixture's volume is the sum of F_i times these (ideal mixing):
  // Mechanism::liquid_volume_flow.
  std::optional<double> liquid_molar_volume() const {
    if (mw && density) return *mw / *density;
    return std::nullopt;
  }
};

}  // namespace rxtrain
