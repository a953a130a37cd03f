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
};

}  // namespace rxtrain
