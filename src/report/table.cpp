#include "rxtrain/report/table.hpp"

#include <fmt/format.h>

#include <cmath>
#include <optional>
#include <vector>

#include "rxtrain/report/caution.hpp"

namespace rxtrain {

namespace {

constexpr double kZeroCelsius = 273.15;  // K

std::string fixed(double v, int digits) {
  if (!std::isfinite(v)) return "-";
  if (std::abs(v) < 0.5 * std::pow(10.0, -digits)) v = 0;  // no "-0.00"
  return fmt::format("{:.{}f}", v, digits);
}
std::string fixed(const std::optional<double>& v, int digits) {
  return v ? fixed(*v, digits) : "-";
}
// Three significant figures for quantities that span decades (space time).
std::string sig(const std::optional<double>& v) {
  if (!v || !std::isfinite(*v)) return "-";
  return fmt::format("{:.3g}", *v);
}
std::string celsius(double T) { return fixed(T - kZeroCelsius, 2); }

const char* kind_name(StageKind k) {
  return k == StageKind::Pfr ? "pfr" : k == StageKind::Cstr ? "cstr" : "exchanger";
}

std::size_t display_width(const std::string& s) {
  std::size_t n = 0;  // code points, not bytes, so "°C" aligns
  for (unsigned char ch : s) n += (ch & 0xC0) != 0x80;
  return n;
}

// The first `n_left` columns left-aligned (names), the rest right-aligned
// (numbers), two spaces between.
std::string render(const std::vector<std::vector<std::string>>& rows, std::size_t n_left) {
  std::vector<std::size_t> width;
  for (const auto& row : rows)
    for (std::size_t c = 0; c < row.size(); ++c) {
      if (width.size() <= c) width.push_back(0);
      width[c] = std::max(width[c], display_width(row[c]));
    }
  std::string out;
  for (const auto& row : rows) {
    std::string line;
    for (std::size_t c = 0; c < row.size(); ++c) {
      const std::string pad(width[c] - display_width(row[c]), ' ');
      line += c < n_left ? row[c] + pad : pad + row[c];
      if (c + 1 < row.size()) line += "  ";
    }
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out += line + "\n";
  }
  return out;
}

}  // namespace

std::string format_stage_table(const TrainResult& result) {
  std::string out;
  out += result.title + "\n";
  const double Ft = result.feed.total_flow();
  out += fmt::format("feed {} °C, {} bar, {} mol/s; key species {}\n\n", celsius(result.feed.T),
                     fixed(result.feed.P / 1e5, 3), fmt::format("{:.4g}", Ft), result.key);

  std::vector<std::vector<std::string>> rows;
  rows.push_back({"stage", "type", "heat", "V m3", "cat kg", "tau s", "T in °C", "T out °C",
                  "T max °C", "X out", "X eq-X", "T eq-T K", "duty kW"});
  bool any_sized = false;
  for (const auto& r : result.stages) {
    std::string heat = "-";
    if (r.heat) heat = *r.heat == HeatMode::Adiabatic ? "adiabatic" : "isothermal";
    std::string V = fixed(r.volume, 3);
    if (r.sized) {
      V += "*";
      any_sized = true;
    }
    rows.push_back({r.id, kind_name(r.kind), heat, V, fixed(r.catalyst_mass, 1), sig(r.space_time),
                    celsius(r.inlet.T), celsius(r.outlet.T), celsius(r.T_max),
                    fixed(r.conversion, 4),
                    r.equilibrium ? fixed(r.equilibrium->approach_X, 4) : "-",
                    r.equilibrium ? fixed(r.equilibrium->approach_T, 2) : "-",
                    fixed(r.duty / 1e3, 2)});
  }
  out += render(rows, 3);
  if (any_sized) out += "* volume found from the stage's target conversion\n";
  bool any_eq = false;
  for (const auto& r : result.stages) any_eq = any_eq || r.equilibrium.has_value();
  if (any_eq) {
    out += "X eq-X, T eq-T: approach to equilibrium at the outlet (X_eq(T_out) - X_out; the "
           "temperature at which X_out is equilibrium, minus T_out)\n";
    for (const auto& r : result.stages)
      if (r.equilibrium)
        out += fmt::format("  {}: the most this stage can reach at any size is X = {} at {} °C\n",
                           r.id, fixed(r.equilibrium->X_ad_eq, 4),
                           celsius(r.equilibrium->T_ad_eq));
  }

  // Space velocities only where they apply (GHSV at 0 °C, 1 atm).
  std::vector<std::vector<std::string>> sv;
  for (const auto& r : result.stages)
    if (r.ghsv || r.whsv || r.lhsv)
      sv.push_back({r.id, sig(r.ghsv), sig(r.whsv), sig(r.lhsv)});
  if (!sv.empty()) {
    sv.insert(sv.begin(), {"stage", "GHSV 1/h", "WHSV 1/h", "LHSV 1/h"});
    out += "\nspace velocities (GHSV: gas at 0 °C and 1 atm; LHSV: liquid at the species' "
           "densities)\n";
    out += render(sv, 1);
  }

  out += fmt::format("\noutlet: {} °C, {} bar, overall conversion of {} = {}\n",
                     celsius(result.outlet.T), fixed(result.outlet.P / 1e5, 3), result.key,
                     fixed(result.conversion, 4));
  std::vector<std::vector<std::string>> fl;
  fl.push_back({"species", "feed mol/s", "outlet mol/s"});
  for (std::size_t i = 0; i < result.species.size(); ++i)
    fl.push_back({result.species[i], fmt::format("{:.5g}", result.feed.F[i]),
                  fmt::format("{:.5g}", std::max(0.0, result.outlet.F[i]))});
  out += render(fl, 1);

  if (!result.warnings.empty()) {
    out += "\nwarnings:\n";
    for (const auto& w : result.warnings) out += "  - " + w + "\n";
  }
  out += fmt::format("\n{}\n", kCaution);
  return out;
}

}  // namespace rxtrain
