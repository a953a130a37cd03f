// rxtrain thermo CASE --temperatures FIRST:LAST:STEP
// Per reaction: K(T), ln K, dH_r(T) and dG0(T) over a temperature grid.
#include <fmt/format.h>

#include <cmath>
#include <cstdio>
#include <memory>
#include <string>

#include "commands.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/models/equilibrium.hpp"

namespace rxtrain::cli {

namespace {

struct ThermoOptions {
  std::string case_file;
  std::string range = "300:900:50";
};

// "FIRST:LAST:STEP": FIRST and LAST are temperatures ("300", "300 K",
// "150 degC"); STEP is a temperature difference in K (a bare number, or
// with "K"), since an offset unit makes no sense for a step.
TemperatureRange parse_range(const std::string& text, const UnitParser& units) {
  const auto c1 = text.find(':');
  const auto c2 = c1 == std::string::npos ? c1 : text.find(':', c1 + 1);
  if (c2 == std::string::npos || text.find(':', c2 + 1) != std::string::npos)
    throw InputError({}, fmt::format("--temperatures expects FIRST:LAST:STEP (e.g. 300:900:25 or "
                                     "\"150 degC:450 degC:10\"), got \"{}\"",
                                     text));
  const SiUnit kelvin = SiUnit::of("K", "a temperature");
  try {
    TemperatureRange r;
    r.first = units.to_si(text.substr(0, c1), kelvin);
    r.last = units.to_si(text.substr(c1 + 1, c2 - c1 - 1), kelvin);
    std::string step = text.substr(c2 + 1);
    if (step.find("deg") != std::string::npos)
      throw InputError(
          {}, fmt::format("--temperatures: give the step in K (a temperature difference), got "
                          "\"{}\"",
                          step));
    r.step = units.to_si(step, kelvin);
    return r;
  } catch (const UnitError& e) {
    throw InputError({}, fmt::format("--temperatures \"{}\": {}", text, e.what()));
  }
}

std::string sci(const std::optional<double>& v) {
  return v && std::isfinite(*v) ? fmt::format("{:.5e}", *v) : "-";
}

int run(const ThermoOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  const TemperatureRange range = parse_range(o.range, units);
  const Mechanism& mech = c.mechanism;
  std::string out = c.title + "\n";
  out += "K in activities (gas: p/1 bar; liquid: C/(1 mol/L)); dG0 = -R T ln K\n";
  for (int j = 0; j < mech.n_reactions(); ++j) {
    const auto& rx = mech.reactions()[j];
    const auto rows = reaction_thermo_table(mech, j, range);
    out += fmt::format("\nreaction {}: {}{}\n", rx.id, rx.equation,
                       rx.reversible ? "" : "  (irreversible: no equilibrium constant)");
    out += fmt::format("{:>9} {:>9} {:>13} {:>11} {:>13} {:>13}\n", "T K", "T °C", "K", "ln K",
                       "dH_r kJ/mol", "dG0 kJ/mol");
    for (const auto& r : rows)
      out +=
          fmt::format("{:>9.2f} {:>9.2f} {:>13} {:>11} {:>13.4f} {:>13}\n", r.T, r.T - kZeroCelsius,
                      sci(r.K), r.ln_K ? fmt::format("{:.5f}", *r.ln_K) : "-", r.dH / 1e3,
                      r.dG ? fmt::format("{:.4f}", *r.dG / 1e3) : "-");
  }
  // No caution here: a table of K(T) designs nothing (the commands that
  // produce a design print it).
  for (const auto& w : c.warnings) out += "warning: " + w + "\n";
  std::fputs(out.c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_thermo(CLI::App& app) {
  auto o = std::make_shared<ThermoOptions>();
  app.add_option("case", o->case_file, "Case file (YAML)")->required();
  app.add_option("--temperatures", o->range,
                 "Temperatures FIRST:LAST:STEP; FIRST and LAST may carry a unit (\"150 degC\"), "
                 "STEP is in K")
      ->type_name("RANGE")
      ->capture_default_str();
  // The option's old name, kept for one release; not shown in --help.
  app.add_option("--T", o->range)->group("");
  return [o] { return run(*o); };
}

}  // namespace rxtrain::cli
