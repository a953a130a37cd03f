// Fuzz target: reaction equations. Any input must end in a ParsedEquation
// that keeps the grammar's promises, or an EquationError whose column lies
// inside the text.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string_view>
#include <vector>

#include "rxtrain/chem/equation.hpp"

namespace {

void check_side(const std::vector<rxtrain::EquationTerm>& side, std::size_t size) {
  if (side.empty()) std::abort();
  for (const auto& t : side)
    if (t.species.empty() || !(t.coefficient > 0) || !std::isfinite(t.coefficient) ||
        t.column >= size)
      std::abort();
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  try {
    const rxtrain::ParsedEquation eq = rxtrain::parse_equation(text);
    check_side(eq.reactants, size);
    check_side(eq.products, size);
  } catch (const rxtrain::EquationError& e) {
    if (e.column() > size) std::abort();
  }
  return 0;
}
