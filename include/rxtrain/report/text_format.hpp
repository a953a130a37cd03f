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

// A stage's heat as every report names it: "adiabatic", "isothermal",
// "cooled" (a cooled stirred tank); `none` for an exchanger.
std::string heat_text(const StageResult& r, const char* none = "-");

// An eigenvalue, 1/s, four significant digits: "-0.2541", "0.2416 ± 2.15i"
// (a complex pair once, by its member with the positive imaginary part).
std::string eigenvalue_text(const std::complex<double>& e);
// Every eigenvalue of a steady state, pairs once: "0.2416 ± 2.15i, -0.01".
std::string eigenvalues_text(const std::vector<std::complex<double>>& eigenvalues);

// `v` with `digits` decimals; "-" when not finite or empty.
std::string fixed_text(double v, int digits);
std::string fixed_text(const std::optional<double>& v, int digits);
// Three significant figures in plain notation (quantities that span
// decades; a large one keeps its whole digits: 1233); "-" as above.
std::string sig_text(const std::optional<double>& v);
// `sig` significant digits in plain notation (never an exponent), trailing
// zeros dropped: 219.44, 8.248, 30000, 0.000012346; "-" as above. For flows,
// masses and volumes, whose columns span decades.
std::string plain_sig_text(double v, int sig = 5);
// A column of fractions (mole fractions) with one number of decimals: 4, or
// more (up to 9) so that its smallest nonzero value shows two significant
// digits (a 5 ppm impurity reads 0.0000050, not 0.0000).
std::vector<std::string> fraction_column(const std::vector<double>& values);
// A relative mass-balance closure, (in - out) / in: "-1.2e-01", or
// "< 1e-12" where it is round-off.
std::string closure_text(double relative);

// "E1: counter flow, LMTD 45.20 K, area 123.4 m2 (utility 30.00 → 45.00
// °C, 12.3 kg/s)" for an exchanger given U and its utility; empty else.
std::string exchanger_size_sentence(const StageResult& r);
// A cooled stage's coolant, heat removed and hot spot, in one sentence
// (empty when the stage is not cooled).
std::string coolant_sentence(const StageResult& r);
// A quench's side stream and its mixing, in one sentence (empty for other
// stages).
std::string quench_sentence(const StageResult& r);
// "X1: counter flow, UA 45 kW/K, effectiveness 0.8123 (NTU 4.33); cold side
// 150.00 → 330.00 °C, hot side (after R1) 420.00 → 240.00 °C, 1234.56 kW"
// (empty for a stage that is not an interchanger).
std::string interchanger_sentence(const StageResult& r);

// A mole fraction as a purity is quoted: in ppm below 0.1 %, else in %
// ("1 ppm", "6 %"), six significant digits.
std::string purity_text(double x);

// "R1: sized to an outlet C2H2 of 1 ppm; it leaves at 1 ppm" for a stage
// sized to an outlet purity; empty for any other.
std::string purity_sentence(const StageResult& r, const std::vector<std::string>& species);

// "R1: effectiveness factors (spherical pellets, solved pellet; isothermal
// pellet, no film resistance): semi 0.412 to 0.633, 0.633 at the outlet;
// ..." for a stage with effectiveness factors; empty for any other.
std::string effectiveness_sentence(const StageResult& r, const std::vector<std::string>& reactions);
// The end of every terminal report: "warnings:" and one "  - " line each
// (nothing when there are none), then the caution.
std::string warnings_and_caution(const std::vector<std::string>& warnings);
// A conversion (or any fraction of the way to 1): four decimals, six
// within 1e-4 of 1, where four would round 0.99995 up to a complete
// conversion that did not happen.
std::string conversion_text(double X);
std::string conversion_text(const std::optional<double>& X);  // "-" when empty
// Masses and volumes: five significant digits, no trailing zeros
// (10000, 18.182, 0.85714); "-" when empty or not finite.
std::string volume_text(const std::optional<double>& v);
// A stage's duty in kW with two decimals; "-" for an adiabatic reactor,
// which exchanges no heat by definition.
std::string duty_text(const StageResult& r);
// Pa -> bar with four significant digits, trailing zeros kept (30.00,
// 1.500, 0.9870): every screen prints pressures this way.
std::string bar_text(double P);
// K -> °C with two decimals (number only, no unit).
std::string celsius_text(double T);
// The same with its unit: "480.00 °C".
std::string celsius_unit_text(double T);
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
