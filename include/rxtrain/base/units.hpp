// Unit strings -> SI values. The only user of udunits2.
//
// A dimensional input is either a bare number (already SI) or a string
// "number unit", e.g. "130 degC", "25 bar", "50 kmol/h", "-8.4 kJ/mol".
// The unit must be convertible to the SI unit the field expects; offsets
// (degC, degF) are applied. Example:
//
//   UnitParser units;
//   double T = units.to_si("130 degC", SiUnit::of("K"));          // 403.15
//   double A = units.to_si("3e-2 mol/(kg*s*bar)",
//                          SiUnit::per_power("mol/(kg*s)", "Pa", 1.0)); // 3e-7
#pragma once

#include <memory>
#include <stdexcept>
#include <string>
#include <string_view>

namespace rxtrain {

// 0 °C in kelvin (exact, by the definition of the Celsius scale): the one
// offset every display of °C and the GHSV's normal conditions use.
inline constexpr double kZeroCelsius = 273.15;  // K

// A temperature for a message a person reads (errors and warnings made in
// the core): "438.76 °C / 711.91 K", °C first as every screen shows it, the
// kelvin beside it for whoever checks against SI output.
std::string temperature_words(double T);

// A unit string the parser does not accept, or one of the wrong dimension.
// The message says what was expected and what was given; the case loader adds
// the file location and the field name.
class UnitError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// The SI unit a field expects: numerator / base^base_power. For most fields
// base is empty and base_power 0 (e.g. "K", "J/mol"). Rate constants use the
// base form: a rate in "mol/(m3*s)" divided by a driving force "mol/m3" or
// "Pa" raised to the (possibly fractional) sum of the reaction orders.
struct SiUnit {
  std::string numerator;    // udunits-parsable SI unit, e.g. "mol/(kg*s)"
  std::string base;         // "" or a udunits-parsable SI unit, e.g. "Pa"
  double base_power = 0;    // any real power; rational powers p/q with q <= 64
  std::string description;  // shown in messages, e.g. "a temperature"

  static SiUnit of(std::string si, std::string description = "");
  static SiUnit per_power(std::string numerator, std::string base, double power,
                          std::string description = "");
  // Human-readable SI unit, e.g. "K" or "mol/(kg*s) / Pa^1.5".
  std::string to_string() const;
  // The same unit as UnitParser reads it back: a compound base in
  // parentheses (a "/" inside it would otherwise divide again), e.g.
  // "mol/(kg*s) / (mol/m3)^1.5", "mol/(kg*s) / Pa^2".
  std::string to_parsable() const;
};

// Options for one conversion.
struct UnitOptions {
  // Energy-per-mole fields: plain "cal"/"kcal" mean the thermochemical
  // calorie (4.184 J exactly), as chemistry tables use, not udunits' default
  // International Table calorie (4.1868 J). "cal_th"/"kcal_th" are always
  // accepted and "cal_IT" is still available for the IT calorie.
  bool plain_cal_is_thermochemical = false;
};

// RAII owner of a udunits2 unit system (loaded once per UnitParser; not
// thread-safe to share across threads while parsing). Move-only.
class UnitParser {
 public:
  UnitParser();  // throws UnitError when the udunits database cannot be loaded
  ~UnitParser();
  UnitParser(UnitParser&&) noexcept;
  UnitParser& operator=(UnitParser&&) noexcept;
  UnitParser(const UnitParser&) = delete;
  UnitParser& operator=(const UnitParser&) = delete;

  // "number unit" or "number" -> SI value in `expected`. Rejects empty text,
  // non-finite numbers, unknown units and units of the wrong dimension.
  double to_si(std::string_view text, const SiUnit& expected,
               const UnitOptions& options = {}) const;

  // A difference, e.g. a temperature margin: as to_si, but a unit's
  // offset cancels, so "15 degC" and "15 K" are both 15 (K).
  double difference_to_si(std::string_view text, const SiUnit& expected,
                          const UnitOptions& options = {}) const;

  // True when `unit` (no number) is convertible to `expected`.
  bool is_convertible(std::string_view unit, const SiUnit& expected) const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace rxtrain
