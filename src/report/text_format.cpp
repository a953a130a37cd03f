#include "rxtrain/report/text_format.hpp"

#include <fmt/format.h>
#include <fmt/ranges.h>

#include <algorithm>
#include <cmath>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/units.hpp"

namespace rxtrain {

namespace {}  // namespace

std::string fixed_text(double v, int digits) {
  if (!std::isfinite(v)) return "-";
  if (std::abs(v) < 0.5 * std::pow(10.0, -digits)) v = 0;  // no "-0.00"
  return fmt::format("{:.{}f}", v, digits);
}

std::string fixed_text(const std::optional<double>& v, int digits) {
  return v ? fixed_text(*v, digits) : "-";
}

std::string heat_text(const StageResult& r, const char* none) {
  const char* h = stage_heat_name(r);
  return h ? std::string(h) : std::string(none);
}

std::string eigenvalue_text(const std::complex<double>& e) {
  if (!std::isfinite(e.real()) || !std::isfinite(e.imag())) return "-";
  if (e.imag() == 0) return fmt::format("{:.4g}", e.real());
  return fmt::format("{:.4g} ± {:.4g}i", e.real(), std::abs(e.imag()));
}

std::string eigenvalues_text(const std::vector<std::complex<double>>& eigenvalues) {
  std::vector<std::string> parts;
  for (const auto& e : eigenvalues)
    if (e.imag() >= 0) parts.push_back(eigenvalue_text(e));
  return fmt::format("{}", fmt::join(parts, ", "));
}

std::string sig_text(const std::optional<double>& v) {
  if (!v || !std::isfinite(*v)) return "-";
  return plain_sig_text(*v, 3);
}

std::string plain_sig_text(double v, int sig) {
  if (!std::isfinite(v)) return "-";
  if (v == 0) return "0";
  const int magnitude = static_cast<int>(std::floor(std::log10(std::abs(v))));
  const int decimals = std::clamp(sig - 1 - magnitude, 0, 15);
  std::string t = fmt::format("{:.{}f}", v, decimals);
  if (t.find('.') != std::string::npos) {
    while (t.back() == '0') t.pop_back();
    if (t.back() == '.') t.pop_back();
  }
  return t == "-0" ? "0" : t;
}

std::vector<std::string> fraction_column(const std::vector<double>& values) {
  int decimals = 4;
  for (double v : values)
    if (std::isfinite(v) && v > 0) {
      const int magnitude = static_cast<int>(std::floor(std::log10(v)));
      decimals = std::max(decimals, std::min(9, 1 - magnitude));
    }
  std::vector<std::string> out;
  for (double v : values) out.push_back(fixed_text(v, decimals));
  return out;
}

std::string purity_text(double x) {
  if (!std::isfinite(x)) return "-";
  return x < 1e-3 ? fmt::format("{:.6g} ppm", x * 1e6) : fmt::format("{:.6g} %", x * 100);
}

std::string purity_sentence(const StageResult& r, const std::vector<std::string>& species) {
  if (!r.outlet_target) return {};
  const auto i = static_cast<std::size_t>(r.outlet_target->species);
  return fmt::format("{}: sized to an outlet {} of {}; it leaves at {}", r.id, species.at(i),
                     purity_text(r.outlet_target->x), purity_text(mole_fractions(r.outlet)[i]));
}

std::string effectiveness_sentence(const StageResult& r,
                                   const std::vector<std::string>& reactions) {
  if (r.effectiveness.empty() || !r.pellet) return {};
  const PelletSpec& p = *r.pellet;
  const char* shape = p.shape == PelletShape::Sphere     ? "spherical"
                      : p.shape == PelletShape::Cylinder ? "cylindrical"
                                                         : "slab";
  const char* model = p.effectiveness == EffectivenessModel::Pellet
                          ? "the pellet solved"
                          : "the generalized Thiele modulus";
  std::string out = fmt::format(
      "{}: effectiveness factors ({} pellets, {}; isothermal pellet, no film resistance):", r.id,
      shape, model);
  for (std::size_t j = 0; j < r.effectiveness.size() && j < reactions.size(); ++j) {
    const auto& e = r.effectiveness[j];
    out += fmt::format("{} {} {:.3f} to {:.3f}, {:.3f} at the outlet", j ? ";" : "", reactions[j],
                       e.min, e.max, e.outlet);
  }
  return out;
}

std::string exchanger_size_sentence(const StageResult& r) {
  if (!r.exchanger_size || !r.utility) return {};
  const auto& z = *r.exchanger_size;
  const auto& u = *r.utility;
  std::string utility = u.T_in == u.T_out ? fmt::format("utility at {} °C", celsius_text(u.T_in))
                                          : fmt::format("utility {} → {} °C", celsius_text(u.T_in),
                                                        celsius_text(u.T_out));
  if (z.utility_flow) utility += fmt::format(", {} kg/s", plain_sig_text(*z.utility_flow));
  return fmt::format("{}: counter flow, LMTD {} K, area {} m2 ({})", r.id, fixed_text(z.lmtd, 2),
                     plain_sig_text(z.area), utility);
}

std::string interchanger_sentence(const StageResult& r) {
  if (!r.interchanger) return {};
  const InterchangerResult& x = *r.interchanger;
  return fmt::format(
      "{}: {} flow, UA {} kW/K, effectiveness {} (NTU {}); cold side {} → {} °C, hot side (after "
      "{}) {} → {} °C, {} kW",
      r.id, flow_arrangement_name(x.arrangement), plain_sig_text(x.UA / 1e3),
      fixed_text(x.effectiveness, 4), plain_sig_text(x.NTU), celsius_text(x.T_cold_in),
      celsius_text(x.T_cold_out), x.hot_from, celsius_text(x.T_hot_in), celsius_text(x.T_hot_out),
      fixed_text(x.duty / 1e3, 2));
}

std::string quench_sentence(const StageResult& r) {
  if (!r.side_stream) return {};
  const Stream& s = *r.side_stream;
  return fmt::format(
      "{}: a side stream of {} mol/s{} joined at {} °C; mixed, {} → {} °C and X {} "
      "on the key fed so far",
      r.id, plain_sig_text(s.total_flow()),
      r.share ? fmt::format(" ({} of the feed)", fixed_text(*r.share, 4)) : "", celsius_text(s.T),
      celsius_text(r.inlet.T), celsius_text(r.outlet.T), conversion_text(r.conversion));
}

std::string coolant_sentence(const StageResult& r) {
  if (!r.coolant || !r.hot_spot) return {};
  const auto& c = *r.coolant;
  const auto& h = *r.hot_spot;
  const std::string coolant =
      c.direction == CoolantFlow::Constant
          ? fmt::format("coolant at {} °C", celsius_text(c.T_in))
          : fmt::format("{} coolant {} → {} °C", coolant_flow_name(c.direction),
                        celsius_text(c.T_in), celsius_text(c.T_out));
  return fmt::format(
      "{}: cooled through {} m2 of tube wall at U = {} W/m2/K ({}), heat removed {} kW; hot "
      "spot {} °C at {} m from the inlet; largest process − coolant difference {} K",
      r.id, plain_sig_text(c.area), plain_sig_text(c.U, 4), coolant, fixed_text(-c.duty / 1e3, 2),
      celsius_text(h.T), plain_sig_text(h.z, 4), fixed_text(c.dT_max, 2));
}

std::string closure_text(double relative) {
  if (!std::isfinite(relative)) return "-";
  // Below 1e-12 it is the round-off of the sums, whose digits vary with
  // the build: say it closes rather than print noise.
  return std::abs(relative) < 1e-12 ? "< 1e-12" : fmt::format("{:.1e}", relative);
}

std::string warnings_and_caution(const std::vector<std::string>& warnings) {
  std::string out;
  if (!warnings.empty()) {
    out += "\nwarnings:\n";
    for (const auto& w : warnings) out += fmt::format("  - {}\n", w);
  }
  return out + fmt::format("\n{}\n", kCaution);
}

std::string conversion_text(double X) {
  return fixed_text(X, std::isfinite(X) && std::abs(1 - X) < 1e-4 ? 6 : 4);
}

std::string conversion_text(const std::optional<double>& X) {
  return X ? conversion_text(*X) : "-";
}

std::string volume_text(const std::optional<double>& v) { return v ? plain_sig_text(*v, 5) : "-"; }

std::string duty_text(const StageResult& r) {
  if (r.kind == StageKind::Quench) return "-";  // adiabatic mixing: no heat crosses
  if (is_reactor(r.kind) && r.heat == HeatMode::Adiabatic && !r.coolant && !r.cooling) return "-";
  return fixed_text(r.duty / 1e3, 2);
}

std::string bar_text(double P) {
  if (!std::isfinite(P)) return "-";
  const double bar = P / 1e5;
  const int magnitude = bar > 0 ? static_cast<int>(std::floor(std::log10(bar))) : 0;
  return fixed_text(bar, std::clamp(3 - magnitude, 0, 6));
}

std::string celsius_text(double T) { return fixed_text(T - kZeroCelsius, 2); }
std::string celsius_unit_text(double T) { return celsius_text(T) + " °C"; }

std::size_t display_width(const std::string& s) {
  std::size_t n = 0;
  for (unsigned char ch : s) n += (ch & 0xC0) != 0x80;
  return n;
}

std::string render_columns(const std::vector<std::vector<std::string>>& rows, std::size_t n_left) {
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

std::string reach_sentence(const StageResult& r, const std::vector<std::string>& species) {
  const StageReach& h = *r.reach;
  const std::string end = reach_end_text(h, *r.heat, species);
  const char* what = r.kind == StageKind::Cstr ? "tank" : "bed";
  if (!h.peak_inside() || !h.V_at_X_max)
    return fmt::format("{}: the most this stage can reach at any size is X = {} at {} °C ({})",
                       r.id, conversion_text(h.X_max), celsius_text(h.T_at_X_max), end);
  std::string where = fmt::format("V = {:.4g} m3", *h.V_at_X_max);
  if (r.bulk_density)
    where += fmt::format(", {:.4g} kg of catalyst", *h.V_at_X_max * *r.bulk_density);
  return fmt::format(
      "{}: the most this stage can reach at any size is X = {} at {} °C ({}); a larger {} gives "
      "conversion back, towards X = {} at {} °C ({})",
      r.id, conversion_text(h.X_max), celsius_text(h.T_at_X_max), where, what,
      conversion_text(h.X_end), celsius_text(h.T_end), end);
}

std::string space_velocity_basis_text(const std::vector<std::string>& basis,
                                      const std::vector<std::string>& species) {
  if (basis.size() == species.size()) return "the whole stream";
  std::string out;
  for (const auto& id : basis) out += (out.empty() ? "" : " + ") + id;
  return out;
}

}  // namespace rxtrain
