// Fuzz target: YAML text -> validated case (parsing, limits, units,
// equations, every check of the loader). Any input must end in a Case or an
// InputError; any other exception, crash, hang or sanitizer report is a bug.
#include <cstddef>
#include <cstdint>
#include <string>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  // Loading the udunits database takes milliseconds; build it once. It is
  // never modified after construction, so sharing it across inputs is safe.
  static const rxtrain::UnitParser units;
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const rxtrain::Case c = rxtrain::load_case_from_string(text, "fuzz.yaml", units);
    (void)c;
  } catch (const rxtrain::InputError&) {
    // The expected answer to a bad file.
  }
  return 0;
}
