// Reaction equations: "2 H2 + O2 -> 2 H2O", "SO2 + 0.5 O2 <-> SO3".
#pragma once

#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

namespace rxtrain {

// A malformed equation; `column` is the 0-based offset into the equation
// text where the problem was found.
class EquationError : public std::runtime_error {
 public:
  EquationError(const std::string& message, std::size_t column)
      : std::runtime_error(message), column_(column) {}
  std::size_t column() const { return column_; }

 private:
  std::size_t column_;
};

struct EquationTerm {
  std::string species;     // species id as written
  double coefficient = 1;  // > 0
  std::size_t column = 0;  // offset of the id in the text, for messages
};

struct ParsedEquation {
  std::vector<EquationTerm> reactants;
  std::vector<EquationTerm> products;
  bool reversible = false;  // "<->" (true) or "->" (false)
};

// Grammar: side arrow side; side: term ("+" term)*; arrow: "->" (one way)
// or "<->" (reversible), the canonical forms; "=>", "<=>", U+2192 (one way)
// and U+21CC (reversible) are accepted too;
// term: [coefficient whitespace] id; id: [A-Za-z0-9_-]+ (may start with a
// digit only if it has a letter); coefficient: positive decimal number
// ("2", "0.5", "1.5e0"). A species may not appear twice on one side.
// Throws EquationError.
ParsedEquation parse_equation(std::string_view text);

}  // namespace rxtrain
