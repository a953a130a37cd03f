// What a study's column (a case path varied, or an output) holds, in a
// person's words and display unit: "train.R1.catalyst" is "Catalyst in R1"
// in kg, "R1.T_max" is "Peak temperature of R1" in °C. The core keeps SI;
// only what people read (terminal, report) is shown this way.
//
// Example:
//   const Quantity q = column_quantity("R1.T_max", "K");
//   q.label();     // "Peak temperature of R1 (°C)"
//   q.show(700.0)  // 426.85
#pragma once

#include <string>

namespace rxtrain {

struct Quantity {
  std::string words;  // "Peak temperature of R1"
  std::string unit;   // display unit: "°C", "bar", "kW", "kg", "m³", "h⁻¹", "K", "–"
  double scale = 1, offset = 0;
  // SI value -> display value.
  double show(double si) const { return si * scale + offset; }
  // "Peak temperature of R1 (°C)"
  std::string label() const;
  // The SI value in display units, by the one precision rule of
  // text_format.hpp: temperatures (and differences) to 0.01 K, fractions
  // with four decimals (six within 1e-4 of 1), pressures with four
  // significant digits, anything else with five, never an exponent.
  std::string text(double si) const;
};

// `name` is a column name (X, T_out, STAGE.FIELD, feed.T, train.STAGE.FIELD,
// ...), `si_unit` its SI unit as the study gives it ("K", "m3", "-", "1").
// A name this does not know keeps its name, and its SI unit (an absolute
// temperature in °C).
Quantity column_quantity(const std::string& name, const std::string& si_unit);

}  // namespace rxtrain
