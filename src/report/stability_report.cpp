#include "rxtrain/report/stability_report.hpp"

#include <fmt/format.h>

#include <cmath>
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

}  // namespace

std::string stability_text(const std::string& title, const StabilityResult& r) {
  std::string out = title + "\n";
  out += fmt::format(
      "steady states of stage {} as {} goes from {} to {} (the case: {}), by pseudo-arclength "
      "continuation: {} points\n",
      r.stage, r.param, value_text(r, r.lo), value_text(r, r.hi), value_text(r, r.base_value),
      r.points);
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
        "hysteresis window: {} from {} to {}: several steady states; which one the tank holds "
        "depends on where it came from\n",
        r.param, value_text(r, r.hysteresis->first), value_text(r, r.hysteresis->second));
  out +=
      "\nbranches (stable: every eigenvalue of the linearized balances has a negative real "
      "part)\n";
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
  const json j{{"param", r.param},
               {"unit", r.unit},
               {"branches", branches},
               {"turning_points", turning},
               {"sensitivity", json::array()},
               {"critical", nullptr}};
  return j.dump(2) + "\n";
}

std::string stability_csv_text(const StabilityResult& r) {
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
  o.title = fmt::format("Steady states of {} against {}", r.stage, r.param);
  o.x_label = is_temperature(r) ? r.param + " (°C)"
                                : (r.unit == "1" ? r.param : r.param + " (" + r.unit + ")");
  o.y_label = "Tank temperature (°C)";
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
                            "unstable (saddle or oscillatory) dashed; past a turning point the "
                            "tank jumps to the other stable branch.",
                            r.stage, r.param),
                std::move(chart)};
}

std::vector<Figure> stability_figures(const StabilityResult& r) {
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
  using html::cell;
  using svg::xml_escape;
  std::string h = html::page_begin(c.title + " — stability of " + r.stage, provenance);
  h += html::feed_section(c);
  h += fmt::format(
      "<h2 id=\"summary\">Turning points</h2>\n<p>Steady states of stage {} as {} "
      "goes from {} to {} (the case: {}), followed by pseudo-arclength "
      "continuation ({} points).</p>\n",
      xml_escape(r.stage), xml_escape(r.param), xml_escape(value_text(r, r.lo)),
      xml_escape(value_text(r, r.hi)), xml_escape(value_text(r, r.base_value)), r.points);
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
                                "which one the tank holds depends on where it came from.",
                                r.param, value_text(r, r.hysteresis->first),
                                value_text(r, r.hysteresis->second))) +
         "</p>\n";
  h += html::figures_section(figures);
  h += html::warnings_section(r.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
