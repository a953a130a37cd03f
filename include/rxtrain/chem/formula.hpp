// Chemical formulas and molar masses from IUPAC standard atomic weights.
#pragma once

#include <map>
#include <stdexcept>
#include <string>
#include <string_view>

namespace rxtrain {

class FormulaError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// Element symbol -> count (may be fractional only if written so, e.g. never
// in practice; counts are doubles so element balances use one arithmetic).
using ElementCounts = std::map<std::string, double>;

// Parses formulas like "C5H12", "H2O", "CH3(CH2)3CH3", "Ca(OH)2".
// Element symbols are one capital letter and an optional lowercase letter
// and must be known elements. Throws FormulaError naming the position.
ElementCounts parse_formula(std::string_view formula);

// Molar mass in kg/mol from conventional IUPAC atomic weights.
double molar_mass(const ElementCounts& elements);

// Standard atomic weight (g/mol, conventional value) of an element symbol;
// throws FormulaError for an unknown symbol.
double atomic_weight(std::string_view symbol);

}  // namespace rxtrain
