#include "limit_margin.hpp"

#include <fmt/format.h>

#include <cmath>

#include "rxtrain/base/error.hpp"

namespace rxtrain::cli {

void add_limit_margin_option(CLI::App& app, std::string& text) {
  text = "5 K";
  app.add_option("--limit-margin", text,
                 "A stage whose peak comes within this of the case's T_max (or, cooling, whose "
                 "lowest point comes within it of T_in_min) gets a note; a temperature "
                 "difference, e.g. 5K or 10 K")
      ->capture_default_str();
}

double parse_limit_margin(const std::string& text, const UnitParser& units) {
  const SourceLocation where{"--limit-margin", 0, 0};
  // An offset unit would turn "5 degC" into 278.15 K: a difference is in K.
  if (text.find("deg") != std::string::npos)
    throw InputError(where, fmt::format("give the margin in K (a temperature difference), got "
                                        "\"{}\"",
                                        text));
  double v = 0;
  try {
    v = units.to_si(text, SiUnit::of("K", "a temperature difference"));
  } catch (const UnitError& e) {
    throw InputError(where, fmt::format("\"{}\": {}", text, e.what()));
  }
  if (!(v >= 0) || !std::isfinite(v))
    throw InputError(where, fmt::format("the margin must be 0 K or more, got \"{}\"", text));
  return v;
}

}  // namespace rxtrain::cli
