// --limit-margin DT, shared by the commands that show trains (run,
// staging, compare, optimize, sweep): a peak within DT of T_max gets a
// note (LimitCheckOptions::margin).
#pragma once

#include <CLI/CLI.hpp>
#include <string>

#include "rxtrain/base/units.hpp"

namespace rxtrain::cli {

// Adds --limit-margin to `app`, storing its text in `text` (default "5 K").
void add_limit_margin_option(CLI::App& app, std::string& text);

// The margin in K: a temperature difference, "5 K", "5K" or a bare number
// (K); an offset unit (degC, degF) or a negative value is an InputError
// located at the option.
double parse_limit_margin(const std::string& text, const UnitParser& units);

}  // namespace rxtrain::cli
