#include "rxtrain/report/quantity.hpp"

#include <fmt/format.h>

#include <cctype>

#include "rxtrain/base/units.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

std::string Quantity::text(double si) const {
  const double v = show(si);
  if (unit == "°C" || unit == "K") return fixed_text(v, 2);
  if (unit == "–") return conversion_text(v);
  if (unit == "bar") return bar_text(si);
  return plain_sig_text(v, 5);
}

std::string Quantity::label() const {
  return unit.empty() ? words : fmt::format("{} ({})", words, unit);
}

Quantity column_quantity(const std::string& name, const std::string& si_unit) {
  // Split "R1.T_max" into stage and field; "train.R1.catalyst" into the
  // same; top-level outputs and feed inputs have no stage.
  std::string stage, field = name;
  if (name.rfind("train.", 0) == 0) {
    const auto dot = name.find('.', 6);
    if (dot != std::string::npos) stage = name.substr(6, dot - 6), field = name.substr(dot + 1);
  } else if (name.rfind("feed.", 0) != 0 && name.rfind("reactions.", 0) != 0) {
    if (const auto dot = name.find('.'); dot != std::string::npos)
      stage = name.substr(0, dot), field = name.substr(dot + 1);
  }
  const std::string of = stage.empty() ? "" : " of " + stage;
  const std::string in = stage.empty() ? "" : " in " + stage;
  auto celsius = [](std::string w) { return Quantity{std::move(w), "°C", 1, -kZeroCelsius}; };
  if (name == "X") return {"Overall conversion of the key", "–"};
  if (name == "T_out") return celsius("Temperature at the train outlet");
  if (name == "feed.T") return celsius("Feed temperature");
  if (name == "feed.P") return {"Feed pressure", "bar", 1e-5};
  if (field == "T_peak") return celsius("Peak temperature" + of);
  if (field == "T_min") return celsius("Lowest temperature" + of);
  if (field == "outlet.T" || field == "T_out") return celsius("Outlet temperature" + of);
  if (field == "conversion") return {"Conversion at the outlet" + of, "–"};
  if (field == "volume") return {"Volume" + of, "m³"};
  if (field == "catalyst" || field == "catalyst_mass") return {"Catalyst" + in, "kg"};
  if (field == "duty") return {"Duty" + of, "kW", 1e-3};
  if (field == "area") return {"Exchanger area" + of, "m²"};
  if (field == "lmtd") return {"Log-mean temperature difference" + of, "K"};
  if (field == "ghsv" || field == "whsv" || field == "lhsv") {
    std::string upper = field;
    for (char& c : upper) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
    return {upper + of, "h⁻¹"};
  }
  if (field == "over_limit") return {"Temperature past the limit" + in, "K"};
  // A cooled stage: a difference of temperatures stays in K; the coolant's
  // heat as any duty.
  if (field == "coolant.dT_max") return {"Largest process − coolant difference" + in, "K"};
  if (field == "coolant.duty") return {"Heat added through the tube walls" + of, "kW", 1e-3};
  if (field == "coolant.T_out") return celsius("Coolant outlet temperature" + of);
  if (field == "hot_spot.z") return {"Hot spot's distance from the inlet" + of, "m"};
  // A mole fraction read as a purity is quoted in ppm (1 ppm would be
  // 0.0000 as a fraction).
  if (field.rfind("x_out.", 0) == 0) return {"Outlet " + field.substr(6) + of, "ppm", 1e6};
  if (field.rfind("yield.", 0) == 0) return {"Yield of " + field.substr(6) + of, "–"};
  if (field.rfind("selectivity.", 0) == 0) return {"Selectivity to " + field.substr(12) + of, "–"};
  if (field.rfind("rate.", 0) == 0)
    return {"Mean rate of " + field.substr(5) + in, si_unit == "mol/(kg*s)"   ? "mol/(kg·s)"
                                                    : si_unit == "mol/(m3*s)" ? "mol/(m³·s)"
                                                                              : si_unit};
  if (field == "equilibrium.X_ad_eq") return {"Adiabatic equilibrium conversion" + of, "–"};
  if (field == "equilibrium.approach_X") return {"X_eq(T_out) − X" + of, "–"};
  // Anything else: its name, and its SI unit (absolute temperatures in °C).
  if (si_unit == "K" && field.find("approach") == std::string::npos) return celsius(name);
  return {name, si_unit == "1" || si_unit == "-" ? "–" : si_unit};
}

}  // namespace rxtrain
