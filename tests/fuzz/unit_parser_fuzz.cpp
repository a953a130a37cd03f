// Fuzz target: unit strings -> SI values. The first byte picks the unit the
// field expects (plain, or a rate-constant unit with a fractional power);
// the rest is the text. Any input must end in a finite value or a
// UnitError.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string_view>

#include "rxtrain/base/units.hpp"

namespace {

rxtrain::SiUnit expected_unit(std::uint8_t selector) {
  using rxtrain::SiUnit;
  switch (selector % 10) {
    case 0:
      return SiUnit::of("K", "a temperature");
    case 1:
      return SiUnit::of("Pa", "a pressure");
    case 2:
      return SiUnit::of("m3", "a volume");
    case 3:
      return SiUnit::of("mol/s", "a molar flow");
    case 4:
      return SiUnit::of("J/mol", "an energy per mole");
    case 5:
      return SiUnit::of("J/(mol*K)", "a molar heat capacity");
    case 6:
      return SiUnit::of("W", "a power");
    case 7:
      return SiUnit::per_power("mol/(kg*s)", "Pa", 1.5, "a rate constant");
    case 8:
      return SiUnit::per_power("mol/(m3*s)", "mol/m3", (selector / 10) / 8.0, "a rate constant");
    default:
      return SiUnit::of("kg/m3", "a density");
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const rxtrain::UnitParser units;  // read-only after construction
  if (size == 0) return 0;
  const rxtrain::SiUnit unit = expected_unit(data[0]);
  rxtrain::UnitOptions options;
  options.plain_cal_is_thermochemical = (data[0] & 0x80) != 0;
  const std::string_view text(reinterpret_cast<const char*>(data + 1), size - 1);
  try {
    const double v = units.to_si(text, unit, options);
    if (!std::isfinite(v)) std::abort();  // documented: never a non-finite value
  } catch (const rxtrain::UnitError&) {
  }
  return 0;
}
