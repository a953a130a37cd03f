#include "rxtrain/report/stability_report.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

using nlohmann::json;

bool is_temperature(const StabilityResult& r) { return r.unit == "K"; }

// A value of the field: temperatures to 0.01 K with °C, others with six
// significant digits and the SI unit.
std::string value_text(const StabilityResult& r, double v) {
  if (is_temperature(r)) return fmt::format("{} K ({} °C)", fixed_text(v, 2), celsius_text(v));
  return r.unit == "1" ? plain_sig_text(v, 6) : plain_sig_text(v, 6) + " " + r.unit;
}

// The field on a figure's axis: °C for temperatures.
double axis_value(const StabilityResult& r, double v) {
  return is_temperature(r) ? v - kZeroCelsius : v;
}

const char* turning_name(TurningKind k) {
  return k == TurningKind::Ignition ? "ignition" : "extinction";
}

// A difference of the field (a margin): kelvin for temperatures.
std::string difference_text(const StabilityResult& r, double d) {
  if (is_temperature(r)) return fixed_text(d, 2) + " K";
  return r.unit == "1" ? plain_sig_text(d, 6) : plain_sig_text(d, 6) + " " + r.unit;
}

std::string S_text(double S) { return plain_sig_text(S, 4); }

// The field's axis label on a figure.
std::string axis_label(const StabilityResult& r) {
  return is_temperature(r) ? r.param + " (°C)"
                           : (r.unit == "1" ? r.param : r.param + " (" + r.unit + ")");
}

// ---------------------------------------------------------- tubular beds

// A sentence of the text output as a paragraph starts: its first letter
// upper case (the sentences start with an ASCII word).
std::string capitalized(std::string s) {
  if (!s.empty() && s[0] >= 'a' && s[0] <= 'z') s[0] = static_cast<char>(s[0] - 'a' + 'A');
  return s;
}

std::string scan_heading(const StabilityResult& r) {
  return fmt::format(
      "sensitivity of stage {}'s peak temperature to {} from {} to {} (the case: {}): {} points; "
      "S = (φ / T_peak) dT_peak/dφ, φ the field, by central differences of {} runs, each "
      "checked against half its step",
      r.stage, r.param, value_text(r, r.lo), value_text(r, r.hi), value_text(r, r.base_value),
      r.points, r.runs);
}

// The critical value and where the case stands, in two sentences.
std::string critical_sentences(const StabilityResult& r) {
  if (!r.critical)
    return "critical value: none in the range (|S| does not peak inside it; see the warnings)";
  const CriticalValue& k = *r.critical;
  const bool rising = k.S > 0;
  // How sharp the peak is: a runaway's S climbs steeply to it, a bed far
  // from one has a shallow maximum.
  double S_min = std::abs(k.S);
  for (const auto& p : r.sensitivity) S_min = std::min(S_min, std::abs(p.S));
  std::string out = fmt::format(
      "critical value (where |S| peaks, the runaway criterion of Morbidelli and Varma 1982): {} = "
      "{}, S = {}, peak temperature {} °C there; over the range |S| goes from {} to {}. ",
      r.param, value_text(r, k.value), S_text(k.S), celsius_text(k.T_peak), S_text(S_min),
      S_text(std::abs(k.S)));
  out += fmt::format(
      "The case stands {} {} it (margin = critical - case = {}){}; the peak temperature {} as {} "
      "rises, so the runaway side lies {} the critical value.",
      difference_text(r, std::abs(k.margin)), k.margin > 0 ? "below" : "above",
      difference_text(r, k.margin), k.beyond ? ", past it on the runaway side" : "",
      rising ? "rises" : "falls", r.param, rising ? "above" : "below");
  if (!k.pronounced)
    out += fmt::format(
        " But |S| there is less than {:g} times its least over the range: a shallow peak in this "
        "range, where a runaway's S climbs several-fold; widen the range to tell.",
        kRunawayPeakProminence);
  return out;
}

std::string tubular_text(const std::string& title, const StabilityResult& r) {
  std::string out = title + "\n" + scan_heading(r) + "\n\n" + critical_sentences(r) + "\n\n";
  const std::size_t n = r.sensitivity.size();
  // About twenty rows, and the one nearest the critical value.
  const std::size_t every = n > 25 ? (n + 19) / 20 : 1;
  std::size_t nearest = n;
  if (r.critical) {
    double best = std::numeric_limits<double>::infinity();
    for (std::size_t k = 0; k < n; ++k)
      if (std::abs(r.sensitivity[k].value - r.critical->value) < best) {
        best = std::abs(r.sensitivity[k].value - r.critical->value);
        nearest = k;
      }
  }
  std::vector<std::vector<std::string>> rows{{r.param, "T peak °C", "T peak K", "S", "+-"}};
  bool unchecked = false;
  for (std::size_t k = 0; k < n; ++k) {
    if (k % every != 0 && k + 1 != n && k != nearest) continue;
    const auto& p = r.sensitivity[k];
    unchecked = unchecked || !p.checked;
    rows.push_back({value_text(r, p.value), celsius_text(p.T_peak), fixed_text(p.T_peak, 2),
                    S_text(p.S) + (p.checked ? "" : " *"), fmt::format("{:.1e}", p.S_error)});
  }
  out += render_columns(rows, 1);
  if (every > 1)
    out += fmt::format("(one point in {} and the one nearest the critical value; --csv has all)\n",
                       every);
  out += "+-: the step's and the half step's S differ by this (the error is about a third)";
  out += unchecked ? "; *: they never agreed within the tolerance\n" : "\n";
  out += "\n" + warnings_and_caution(r.warnings);
  return out;
}

std::string tubular_csv(const StabilityResult& r) {
  std::string out = "value,T_peak_K,S,S_error,checked\n";
  for (const auto& p : r.sensitivity)
    out += fmt::format("{:.10g},{:.10g},{:.10g},{:.3g},{}\n", p.value, p.T_peak, p.S, p.S_error,
                       p.checked ? "yes" : "no");
  return out;
}

// S (or T_peak) against the field, the critical value and the case marked.
Figure scan_figure(const StabilityResult& r, bool sensitivity) {
  svg::ChartOptions o;
  o.title = sensitivity
                ? fmt::format("Sensitivity of {}'s peak temperature to {}", r.stage, r.param)
                : fmt::format("Peak temperature of {} against {}", r.stage, r.param);
  o.x_label = axis_label(r);
  o.y_label = sensitivity ? "S = (φ / T_peak) dT_peak/dφ" : "Peak temperature (°C)";
  o.x_domain = svg::nice_domain(axis_value(r, r.lo), axis_value(r, r.hi));
  svg::Chart chart(o);
  std::vector<double> x, y;
  for (const auto& p : r.sensitivity) {
    x.push_back(axis_value(r, p.value));
    y.push_back(sensitivity ? p.S : p.T_peak - kZeroCelsius);
  }
  svg::LineOptions lo;
  lo.colour = sensitivity ? "#0072B2" : "#D55E00";
  lo.dash = "";
  lo.marker = r.sensitivity.size() <= 41 ? svg::Marker::Circle : svg::Marker::None;
  chart.add_line(x, y, lo);
  if (r.critical) {
    svg::RefLineOptions c;
    c.label = "critical";
    c.colour = "#CC0000";
    c.dash = "";
    chart.add_vline(axis_value(r, r.critical->value), c);
  }
  svg::RefLineOptions d;
  d.label = "case";
  chart.add_vline(axis_value(r, r.base_value), d);
  std::string caption =
      sensitivity ? fmt::format(
                        "The normalized sensitivity of {}'s peak temperature to {}; where it "
                        "peaks (red) is the critical value, past which the bed runs away "
                        "(Morbidelli and Varma 1982); the dashed line is the case's value.",
                        r.stage, r.param)
                  : fmt::format(
                        "The peak temperature of {} at each value of {}; it climbs fastest at "
                        "the critical value (red); the dashed line is the case's value.",
                        r.stage, r.param);
  return Figure{sensitivity ? "sensitivity" : "peak-temperature", std::move(caption),
                std::move(chart)};
}

std::string tubular_html(const Case& c, const StabilityResult& r,
                         const std::vector<Figure>& figures, const ReportProvenance& provenance) {
  using svg::xml_escape;
  std::string h = html::page_begin(c.title + " — runaway margin of " + r.stage, provenance);
  h += html::feed_section(c);
  h += "<h2 id=\"summary\">Critical value</h2>\n<p>" + xml_escape(capitalized(scan_heading(r))) +
       ".</p>\n";
  h += "<p>" + xml_escape(capitalized(critical_sentences(r))) + "</p>\n";
  if (r.critical) {
    const CriticalValue& k = *r.critical;
    h += "<table>\n" +
         html::header_row({r.param + " critical", "case", "margin", "S there", "T peak there"});
    h += "<tr>" + html::cell(value_text(r, k.value), true) +
         html::cell(value_text(r, r.base_value), true) +
         html::cell(difference_text(r, k.margin), true) + html::cell(S_text(k.S), true) +
         html::temperature_cell(k.T_peak) + "</tr>\n</table>\n";
  }
  h += html::figures_section(figures);
  h += html::warnings_section(r.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace

std::string stability_text(const std::string& title, const StabilityResult& r) {
  if (r.tubular) return tubular_text(title, r);
  std::string out = title + "\n";
  out += fmt::format(
      "steady states of {} {} as {} goes from {} to {} (the case: {}), by pseudo-arclength "
      "continuation: {} points\n",
      r.loop ? "the loop of interchanger" : "stage", r.stage, r.param, value_text(r, r.lo),
      value_text(r, r.hi), value_text(r, r.base_value), r.points);
  if (r.loop) out += "(T: the interchanger's cold outlet)\n";
  out += "\nturning points\n";
  if (r.turning_points.empty()) {
    out += "  none in the range: one steady state at every value reached\n";
  } else {
    std::vector<std::vector<std::string>> rows{{"kind", r.param, "T °C", "T K", "X"}};
    for (const auto& t : r.turning_points)
      rows.push_back({turning_name(t.kind), value_text(r, t.value), celsius_text(t.T),
                      fixed_text(t.T, 2), conversion_text(t.X)});
    out += render_columns(rows, 1);
  }
  if (r.hysteresis)
    out += fmt::format(
        "hysteresis window: {} from {} to {}: several steady states; which one the {} holds "
        "depends on where it came from\n",
        r.param, value_text(r, r.hysteresis->first), value_text(r, r.hysteresis->second),
        r.loop ? "plant" : "tank");
  out += r.loop ? "\nbranches (stable: the loop gain d(T fed back)/d(T assumed) is below 1)\n"
                : "\nbranches (stable: every eigenvalue of the linearized balances has a "
                  "negative real part)\n";
  std::vector<std::vector<std::string>> rows{
      {"#", "stability", r.param + " from", "to", "T °C from", "to", "points"}};
  for (std::size_t k = 0; k < r.branches.size(); ++k) {
    const auto& b = r.branches[k];
    const auto& a = b.points.front();
    const auto& z = b.points.back();
    std::string kind = b.stable ? "stable" : std::string(stability_kind_name(a.kind));
    if (!b.stable && b.points.size() > 1) kind = stability_kind_name(b.points[1].kind);
    rows.push_back({std::to_string(k + 1), kind, value_text(r, a.value), value_text(r, z.value),
                    celsius_text(a.T), celsius_text(z.T), std::to_string(b.points.size())});
  }
  out += render_columns(rows, 2);
  out += "\n" + warnings_and_caution(r.warnings);
  return out;
}

std::string stability_json_text(const StabilityResult& r) {
  json branches = json::array();
  for (const auto& b : r.branches) {
    json pts = json::array();
    for (const auto& p : b.points)
      pts.push_back({{"value", json_number(p.value)},
                     {"T", json_number(p.T)},
                     {"conversion", json_number(p.X)}});
    branches.push_back({{"stable", b.stable}, {"points", pts}});
  }
  json turning = json::array();
  for (const auto& t : r.turning_points)
    turning.push_back(
        {{"kind", turning_name(t.kind)}, {"value", json_number(t.value)}, {"T", json_number(t.T)}});
  json sensitivity = json::array();
  for (const auto& p : r.sensitivity)
    sensitivity.push_back({{"value", json_number(p.value)},
                           {"T_peak", json_number(p.T_peak)},
                           {"S", json_number(p.S)},
                           {"S_error", json_number(p.S_error)},
                           {"checked", p.checked}});
  json critical = nullptr;
  if (r.critical)
    critical = {{"value", json_number(r.critical->value)},
                {"margin", json_number(r.critical->margin)},
                {"S", json_number(r.critical->S)},
                {"T_peak", json_number(r.critical->T_peak)},
                {"beyond", r.critical->beyond},
                {"pronounced", r.critical->pronounced}};
  const json j{{"param", r.param},           {"unit", r.unit},
               {"branches", branches},       {"turning_points", turning},
               {"sensitivity", sensitivity}, {"critical", critical}};
  return j.dump(2) + "\n";
}

std::string stability_csv_text(const StabilityResult& r) {
  if (r.tubular) return tubular_csv(r);
  std::string out = "branch,stable,kind,value,T_K,conversion\n";
  for (std::size_t k = 0; k < r.branches.size(); ++k)
    for (const auto& p : r.branches[k].points)
      out += fmt::format("{},{},{},{:.10g},{:.10g},{:.10g}\n", k + 1,
                         r.branches[k].stable ? "yes" : "no", stability_kind_name(p.kind), p.value,
                         p.T, p.X);
  return out;
}

Figure stability_figure(const StabilityResult& r) {
  svg::ChartOptions o;
  o.title = fmt::format("Steady states of {} against {}",
                        r.loop ? "the loop of " + r.stage : r.stage, r.param);
  o.x_label = axis_label(r);
  o.y_label = r.loop ? "Interchanger cold outlet (°C)" : "Tank temperature (°C)";
  o.x_domain = svg::nice_domain(axis_value(r, r.lo), axis_value(r, r.hi));
  svg::Chart chart(o);
  bool stable_labelled = false, unstable_labelled = false;
  for (const auto& b : r.branches) {
    std::vector<double> x, y;
    for (const auto& p : b.points) {
      x.push_back(axis_value(r, p.value));
      y.push_back(p.T - kZeroCelsius);
    }
    svg::LineOptions lo;
    lo.colour = b.stable ? "#0072B2" : "#D55E00";
    lo.dash = b.stable ? "" : "6 4";
    bool& labelled = b.stable ? stable_labelled : unstable_labelled;
    if (!labelled) lo.label = b.stable ? "stable" : "unstable";
    labelled = true;
    chart.add_line(x, y, lo);
  }
  for (const auto& t : r.turning_points) {
    svg::TextOptions to;
    chart.add_text(axis_value(r, t.value), t.T - kZeroCelsius, turning_name(t.kind), to);
  }
  return Figure{"s-curve",
                fmt::format("The steady states of {} as {} varies: stable branches solid, "
                            "unstable ({}) dashed; past a turning point the {} jumps to the "
                            "other stable branch.",
                            r.loop ? "the loop of " + r.stage : r.stage, r.param,
                            r.loop ? "loop gain above 1" : "saddle or oscillatory",
                            r.loop ? "plant" : "tank"),
                std::move(chart)};
}

std::vector<Figure> stability_figures(const StabilityResult& r) {
  if (r.tubular) return {scan_figure(r, true), scan_figure(r, false)};
  std::vector<Figure> out{stability_figure(r)};
  if (r.heat_curves.empty()) return out;
  svg::ChartOptions o;
  o.title = fmt::format("Heat generated and removed in {} at {} = {}", r.stage, r.param,
                        value_text(r, r.base_value));
  o.x_label = "Tank temperature (°C)";
  o.y_label = "Heat (kW)";
  svg::Chart chart(o);
  std::vector<double> T, gen, rem;
  for (const auto& p : r.heat_curves) {
    T.push_back(p.T - kZeroCelsius);
    gen.push_back(p.generation / 1e3);
    rem.push_back(p.removal / 1e3);
  }
  svg::LineOptions g;
  g.label = "generated by the reactions";
  g.colour = "#D55E00";
  g.dash = "";
  chart.add_line(T, gen, g);
  svg::LineOptions m;
  m.label = "removed by the flow and the wall";
  m.colour = "#0072B2";
  m.dash = "";
  chart.add_line(T, rem, m);
  out.push_back(Figure{
      "heat-curves",
      fmt::format("At the case's {} the heat the reactions release at each tank temperature (with "
                  "the mole balances solved there) and the heat the flow and the wall take away; "
                  "they cross at the steady states (van Heerden's construction).",
                  r.param),
      std::move(chart)});
  return out;
}

std::string stability_report_html(const Case& c, const StabilityResult& r,
                                  const std::vector<Figure>& figures,
                                  const ReportProvenance& provenance) {
  if (r.tubular) return tubular_html(c, r, figures, provenance);
  using html::cell;
  using svg::xml_escape;
  std::string h = html::page_begin(c.title + " — stability of " + r.stage, provenance);
  h += html::feed_section(c);
  h += fmt::format(
      "<h2 id=\"summary\">Turning points</h2>\n<p>Steady states of {} as {} "
      "goes from {} to {} (the case: {}), followed by pseudo-arclength "
      "continuation ({} points).</p>\n",
      xml_escape(r.loop ? "the loop of interchanger " + r.stage + " (T: its cold outlet)"
                        : "stage " + r.stage),
      xml_escape(r.param), xml_escape(value_text(r, r.lo)), xml_escape(value_text(r, r.hi)),
      xml_escape(value_text(r, r.base_value)), r.points);
  if (r.turning_points.empty()) {
    h += "<p>None in the range: one steady state at every value reached.</p>\n";
  } else {
    h += "<table>\n" + html::header_row({"kind", r.param, "T (°C / K)", "X"});
    for (const auto& t : r.turning_points)
      h += "<tr>" + cell(turning_name(t.kind), false) + cell(value_text(r, t.value), true) +
           html::temperature_cell(t.T) + cell(conversion_text(t.X), true) + "</tr>\n";
    h += "</table>\n";
  }
  if (r.hysteresis)
    h += "<p>" +
         xml_escape(fmt::format("Hysteresis window: {} from {} to {}: several steady states; "
                                "which one the {} holds depends on where it came from.",
                                r.param, value_text(r, r.hysteresis->first),
                                value_text(r, r.hysteresis->second), r.loop ? "plant" : "tank")) +
         "</p>\n";
  h += html::figures_section(figures);
  h += html::warnings_section(r.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
