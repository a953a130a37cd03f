// Small text-formatting helpers shared by the terminal reports: fixed
// decimals that never print "-0.00" or "nan", °C from K, and aligned
// columns. Display units only; the core stays SI.
//
// Example:
//   std::vector<std::vector<std::string>> rows{{"bed", "T in °C"}, {"B1", celsius_text(700.0)}};
//   std::string table = render_columns(rows, 1);
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

// "R1: the most this stage can reach at any size is X = 0.9280 at 650.12 °C
// (the adiabatic equilibrium limit)", or, where the conversion peaks inside
// the stage, the peak with its volume and the end point a larger stage
// falls back to. r.reach and r.heat must be set.
std::string reach_sentence(const StageResult& r, const std::vector<std::string>& species);

// `v` with `digits` decimals; "-" when not finite or empty.
std::string fixed_text(double v, int digits);
std::string fixed_text(const std::optional<double>& v, int digits);
// Three significant figures (quantities that span decades); "-" as above.
std::string sig_text(const std::optional<double>& v);
// K -> °C with two decimals (number only, no unit).
std::string celsius_text(double T);
// Code points, not bytes, so "°C" aligns.
std::size_t display_width(const std::string& s);
// Rows of cells: the first `n_left` columns left-aligned (names), the rest
// right-aligned (numbers), two spaces between; one line per row.
std::string render_columns(const std::vector<std::vector<std::string>>& rows, std::size_t n_left);
// What WHSV and LHSV of a stage are on, from the species it names
// (StageResult::space_velocity_basis) against all `species` of the case:
// "the whole stream" or "BZ + CH".
std::string space_velocity_basis_text(const std::vector<std::string>& basis,
                                      const std::vector<std::string>& species);

}  // namespace rxtrain
