#include "rxtrain/report/figures.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <optional>
#include <string>
#include <vector>

#include "rxtrain/base/units.hpp"

namespace rxtrain {

namespace {

const char* stage_word(StageKind k) {
  return k == StageKind::Pfr ? "tubular" : k == StageKind::Cstr ? "stirred tank" : "exchanger";
}

bool all_reactors_have_catalyst(const TrainResult& r) {
  bool any = false;
  for (const auto& s : r.stages) {
    if (!is_reactor(s.kind)) continue;
    if (!s.catalyst_mass) return false;
    any = true;
  }
  return any;
}

}  // namespace

std::string stage_colour(std::size_t reactor_index) {
  // Okabe-Ito without black (the equilibrium curve), yellow (faint on white)
  // and vermillion (the T_max line): blue, orange, sky blue, bluish green,
  // reddish purple.
  static constexpr std::array<std::string_view, 5> kStageColours = {"#0072B2", "#E69F00", "#56B4E9",
                                                                    "#009E73", "#CC79A7"};
  return std::string(kStageColours[reactor_index % kStageColours.size()]);
}

std::string stage_colour(const TrainResult& r, const std::string& stage_id) {
  std::size_t k = 0;
  for (const auto& s : r.stages) {
    if (!is_reactor(s.kind)) continue;
    if (s.id == stage_id) return stage_colour(k);
    ++k;
  }
  return kExchangerColour;
}

namespace {

// A sixth reactor onwards repeats a colour; a dash keeps it apart.
std::string stage_dash(const TrainResult& r, const std::string& stage_id) {
  std::size_t k = 0;
  for (const auto& s : r.stages) {
    if (!is_reactor(s.kind)) continue;
    if (s.id == stage_id) return k < 5 ? "" : "8 3";
    ++k;
  }
  return "";
}

// The box the reactor paths after the first one span, when they crowd a
// corner of the whole diagram (each side under 35 % of the whole): the
// region worth a zoomed panel. Empty otherwise.
struct Box {
  double x0, x1, y0, y1;
};
std::optional<Box> crowded_region(const TrainResult& r) {
  double ax0 = INFINITY, ax1 = -INFINITY, ay0 = INFINITY, ay1 = -INFINITY;  // all paths
  double bx0 = INFINITY, bx1 = -INFINITY, by0 = INFINITY, by1 = -INFINITY;  // later beds
  int reactors = 0;
  for (const auto& s : r.stages) {
    const bool later = is_reactor(s.kind) && reactors >= 1;
    if (is_reactor(s.kind)) ++reactors;
    for (const auto& p : s.profile) {
      const double T = p.T - kZeroCelsius;
      ax0 = std::min(ax0, T), ax1 = std::max(ax1, T), ay0 = std::min(ay0, p.X),
      ay1 = std::max(ay1, p.X);
      if (later)
        bx0 = std::min(bx0, T), bx1 = std::max(bx1, T), by0 = std::min(by0, p.X),
        by1 = std::max(by1, p.X);
    }
  }
  if (reactors < 2 || !(bx1 >= bx0) || !(ax1 > ax0) || !(ay1 > ay0)) return std::nullopt;
  if (bx1 - bx0 > 0.35 * (ax1 - ax0) || by1 - by0 > 0.35 * (ay1 - ay0)) return std::nullopt;
  // Pad by a quarter of each side (at least 5 K and 0.02) so that the
  // coolers' steps and the equilibrium curve nearby show too.
  const double px = std::max(5.0, 0.25 * (bx1 - bx0)), py = std::max(0.02, 0.25 * (by1 - by0));
  return Box{bx0 - px, bx1 + px, std::max(0.0, by0 - py), std::min(1.0, by1 + py)};
}

}  // namespace

namespace {

svg::Chart tx_chart(const Case& c, const TrainResult& r, const std::string& title,
                    const std::optional<Box>& zoom) {
  svg::ChartOptions o;
  o.width = 720;
  o.height = 460;
  o.title = title;
  o.x_label = "Temperature (°C)";
  o.y_label = fmt::format("Conversion of {} (–)", r.key);
  if (zoom) {
    o.x_domain = svg::Interval{zoom->x0, zoom->x1};
    o.y_domain = svg::Interval{zoom->y0, zoom->y1};
  }
  svg::Chart chart(o);
  std::vector<double> x, y;
  if (!r.equilibrium_curve.empty()) {
    for (const auto& p : r.equilibrium_curve) {
      x.push_back(p.T - kZeroCelsius);
      y.push_back(p.X_eq);
    }
    chart.add_line(x, y,
                   {.label = "equilibrium X_eq(T) at the feed composition",
                    .colour = "#000000",
                    .dash = "",
                    .width = 2.5});
  }
  if (r.max_rate_locus.size() >= 2) {
    x.clear();
    y.clear();
    for (const auto& p : r.max_rate_locus) {
      x.push_back(p.T - kZeroCelsius);
      y.push_back(p.X);
    }
    chart.add_line(
        x, y,
        {.label = "maximum-rate locus T_opt(X)", .colour = "#777777", .dash = "2 3", .width = 1.5});
  }
  bool exchanger_in_legend = false, quench_in_legend = false;
  for (const auto& s : r.stages) {
    x.clear();
    y.clear();
    for (const auto& p : s.profile) {
      x.push_back(p.T - kZeroCelsius);
      y.push_back(p.X);
    }
    if (x.empty()) continue;
    const std::string colour = stage_colour(r, s.id);
    if (s.kind == StageKind::Quench) {
      // The mixing line: a step down in T and X (the side stream's key
      // joins the basis), in the legend once.
      chart.add_line(x, y,
                     {.label = quench_in_legend ? "" : "quenches (mixing)",
                      .colour = "#444444",
                      .dash = "1 3",
                      .width = 2.0});
      quench_in_legend = true;
    } else if (!is_reactor(s.kind)) {
      // One neutral style for every exchanger, in the legend once.
      chart.add_line(x, y,
                     {.label = exchanger_in_legend ? "" : "exchangers (constant conversion)",
                      .colour = colour,
                      .dash = "6 3",
                      .width = 1.5});
      exchanger_in_legend = true;
    } else if (s.kind == StageKind::Cstr) {
      // A stirred tank has no path: its contents are its outlet state. A
      // thin jump from its inlet, and the tank as a point.
      const std::vector<double> jx{s.inlet.T - kZeroCelsius, x.back()},
          jy{(s.F_key_fed > 0 ? ConversionBasis{c.key, s.F_key_fed} : c.conversion_basis())
                 .conversion(s.inlet),
             y.back()};
      chart.add_line(jx, jy, {.colour = colour, .dash = "2 3", .width = 1.0});
      const std::vector<double> px{x.back()}, py{y.back()};
      chart.add_line(px, py,
                     {.label = fmt::format("{} ({})", s.id, stage_word(s.kind)),
                      .colour = colour,
                      .dash = "",
                      .marker = svg::Marker::Circle,
                      .marker_size = 5.0});
    } else {
      chart.add_line(x, y,
                     {.label = fmt::format("{} ({})", s.id, stage_word(s.kind)),
                      .colour = colour,
                      .dash = stage_dash(r, s.id),
                      .width = 2.5});
    }
    if (is_reactor(s.kind)) chart.add_text(x.back(), y.back(), s.id);
  }
  if (c.limits.T_max)
    chart.add_vline(*c.limits.T_max - kZeroCelsius, {.label = "T_max", .colour = "#D55E00"});
  if (c.limits.T_in_min) chart.add_vline(*c.limits.T_in_min - kZeroCelsius, {.label = "T_in_min"});
  if (c.target_conversion) chart.add_hline(*c.target_conversion, {.label = "target"});
  return chart;
}

std::string tx_caption(const TrainResult& r) {
  std::string caption =
      "Each reactor's operating path (a stirred tank is a point, reached by a jump from its "
      "inlet); exchangers are the constant-conversion steps between them.";
  if (!r.equilibrium_curve.empty())
    caption += " An adiabatic bed can approach, never cross, the equilibrium curve.";
  return caption;
}

}  // namespace

Figure tx_diagram(const Case& c, const TrainResult& r, const std::string& title) {
  return {"tx-diagram", tx_caption(r), tx_chart(c, r, title, std::nullopt)};
}

std::vector<Figure> tx_figures(const Case& c, const TrainResult& r, const std::string& title) {
  std::vector<Figure> out;
  out.push_back(tx_diagram(c, r, title));
  if (const auto zoom = crowded_region(r))
    out.push_back({"tx-diagram-zoom",
                   "The same diagram, zoomed on the reactors after the first, which crowd one "
                   "corner of the whole.",
                   tx_chart(c, r, title + ", zoomed on the later reactors", zoom)});
  return out;
}

std::vector<Figure> profile_figures(const TrainResult& r) {
  const bool catalyst = all_reactors_have_catalyst(r);
  const std::string position =
      catalyst ? "Catalyst mass from the train inlet (kg)" : "Volume from the train inlet (m³)";
  svg::ChartOptions ot;
  ot.width = 720;
  ot.height = 340;
  ot.title = "Temperature along the train";
  ot.x_label = position;
  ot.y_label = "Temperature (°C)";
  svg::ChartOptions ox = ot;
  ox.title = "Conversion along the train";
  ox.y_label = fmt::format("Conversion of {} (–)", r.key);
  svg::ChartOptions op = ot;
  op.title = "Pressure along the train";
  op.y_label = "Pressure (bar)";
  svg::Chart tchart(ot), xchart(ox), pchart(op);
  // The pressure panel only where a bed has a pressure drop.
  const bool pressure = std::any_of(r.stages.begin(), r.stages.end(), [](const StageResult& s) {
    return s.hydraulics && s.hydraulics->dP;
  });
  double start = 0;
  for (const auto& s : r.stages) {
    if (!is_reactor(s.kind)) continue;
    const double scale = catalyst ? *s.bulk_density : 1.0;
    std::vector<double> pos, T, X, P, Tc;
    if (s.kind == StageKind::Cstr) {
      // Uniform contents: the outlet state across the whole volume.
      const double V = s.volume.value_or(0);
      pos = {start, start + V * scale};
      T = {s.outlet.T - kZeroCelsius, s.outlet.T - kZeroCelsius};
      X = {s.conversion, s.conversion};
    } else {
      for (const auto& p : s.profile) {
        pos.push_back(start + p.V * scale);
        T.push_back(p.T - kZeroCelsius);
        X.push_back(p.X);
        P.push_back(p.P.value_or(s.inlet.P) / 1e5);
        if (p.T_coolant) Tc.push_back(*p.T_coolant - kZeroCelsius);
      }
    }
    if (P.size() != pos.size()) P.assign(pos.size(), s.outlet.P / 1e5);  // a tank
    const std::string label = fmt::format("{} ({})", s.id, stage_word(s.kind));
    const std::string colour = stage_colour(r, s.id), dash = stage_dash(r, s.id);
    tchart.add_line(pos, T, {.label = label, .colour = colour, .dash = dash});
    // A cooled stage: its coolant beside it, dotted in the stage's colour.
    if (s.coolant && Tc.size() == pos.size())
      tchart.add_line(pos, Tc, {.label = s.id + " coolant", .colour = colour, .dash = "2 3"});
    xchart.add_line(pos, X, {.label = label, .colour = colour, .dash = dash});
    pchart.add_line(pos, P, {.label = label, .colour = colour, .dash = dash});
    if (start > 0) {
      tchart.add_vline(start, {.label = s.id});
      xchart.add_vline(start, {.label = s.id});
      pchart.add_vline(start, {.label = s.id});
    }
    start = pos.empty() ? start : pos.back();
  }
  const bool cooled = std::any_of(r.stages.begin(), r.stages.end(),
                                  [](const StageResult& s) { return s.coolant.has_value(); });
  std::vector<Figure> out;
  out.push_back({"profile-temperature",
                 std::string("Temperature along every reactor stage, end to end; a stirred tank "
                             "is uniform at its outlet state. Exchangers take no volume and show "
                             "as jumps at the boundaries.") +
                     (cooled ? " A cooled stage's coolant is drawn dotted in its colour." : ""),
                 std::move(tchart)});
  out.push_back({"profile-conversion", "Overall conversion of the key along every reactor stage.",
                 std::move(xchart)});
  if (pressure)
    out.push_back({"profile-pressure",
                   "Pressure along every reactor stage: Ergun's pressure drop in the beds given "
                   "a vessel, a pellet and the fluid's viscosity; constant elsewhere.",
                   std::move(pchart)});
  return out;
}

Figure levenspiel_figure(const std::vector<LevenspielCurve>& curves, const std::string& key) {
  const bool catalyst =
      !curves.empty() && std::all_of(curves.begin(), curves.end(),
                                     [](const LevenspielCurve& c) { return c.catalyst_basis; });
  svg::ChartOptions o;
  o.width = 720;
  o.height = 400;
  o.title = "Levenspiel plot";
  o.x_label = fmt::format("Conversion of {} (–)", key);
  o.y_label = catalyst ? "F_key,feed / (−r′) (kg)" : "F_key,feed / (−r) (m³)";
  // Near equilibrium 1/r grows without bound; frame the bulk of the data
  // so the areas stay readable, and say so in the caption.
  std::vector<double> all;
  for (const auto& c : curves)
    for (const auto& p : c.points) all.push_back(p.inverse_rate);
  bool clipped = false;
  if (all.size() >= 4) {
    std::sort(all.begin(), all.end());
    const double cap = 1.25 * all[static_cast<std::size_t>(0.9 * (all.size() - 1))];
    if (all.back() > cap) {
      o.y_domain = svg::Interval{0.0, cap};
      clipped = true;
    }
  }
  svg::Chart chart(o);
  std::size_t index = 0;
  for (const auto& c : curves) {
    const std::string colour = stage_colour(index++);  // one curve per reactor, in train order
    const std::string label =
        fmt::format("{}: {} {}", c.stage, c.rectangle ? "rectangle" : "area",
                    catalyst ? fmt::format("{:.4g} kg", c.area) : fmt::format("{:.4g} m³", c.area));
    if (c.points.empty()) continue;
    if (c.rectangle) {
      const double h = c.points.back().inverse_rate;
      const std::vector<double> x = {c.X_in, c.X_out}, y = {h, h};
      chart.add_area(x, y, {.label = label, .colour = colour, .opacity = 0.3});
      chart.add_line(x, y, {.colour = colour, .dash = ""});
    } else {
      std::vector<double> x, y;
      for (const auto& p : c.points) {
        x.push_back(p.X);
        y.push_back(p.inverse_rate);
      }
      chart.add_area(x, y, {.label = label, .colour = colour, .opacity = 0.3});
      chart.add_line(x, y, {.colour = colour, .dash = ""});
    }
  }
  std::string caption =
      "The shaded area of each stage equals its volume (or catalyst mass): the area under the "
      "curve for a tubular stage, the rectangle at its outlet rate for a stirred tank.";
  if (clipped) caption += " The vertical axis is cut where 1/r grows steeply near equilibrium.";
  return {"levenspiel", caption, std::move(chart)};
}

std::vector<Figure> run_figures(const Case& c, const TrainResult& r,
                                const std::vector<LevenspielCurve>& curves) {
  std::vector<Figure> out;
  for (auto& f : tx_figures(c, r)) out.push_back(std::move(f));
  for (auto& f : profile_figures(r)) out.push_back(std::move(f));
  if (!curves.empty()) out.push_back(levenspiel_figure(curves, r.key));
  return out;
}

}  // namespace rxtrain
