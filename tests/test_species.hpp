// Species with constant heat capacity for tests that build a Mechanism by
// hand (no case file): SI units, invented values supplied by each test.
#pragma once

#include <string>

#include "rxtrain/chem/species.hpp"
#include "rxtrain/chem/thermo.hpp"

namespace rxtrain::test {

inline Species make_species(const std::string& id, double cp, double h_f, double s298, double mw,
                            double density) {
  Species s;
  s.id = id;
  s.name = id;
  s.mw = mw;
  s.density = density;
  s.thermo = ThermoModel(CpConstant{cp}, h_f, s298);
  return s;
}

}  // namespace rxtrain::test
