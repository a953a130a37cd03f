#include "rxtrain/report/figures.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
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
    if (s.kind == StageKind::Exchanger) continue;
    if (!s.catalyst_mass) return false;
    any = true;
  }
  return any;
}

// Palette colour of the k-th stage path; black is left to the equilibrium
// curve, so long trains never draw a bed in the curve's colour.
std::string path_colour(std::size_t k) {
  std::vector<std::string> colours;
  for (std::size_t i = 0; i < svg::kOkabeIto.size(); ++i)
    if (svg::series_colour(i) != "#000000") colours.emplace_back(svg::series_colour(i));
  return colours[k % colours.size()];
}

}  // namespace

Figure tx_diagram(const Case& c, const TrainResult& r, const std::string& title) {
  svg::ChartOptions o;
  o.width = 720;
  o.height = 460;
  o.title = title;
  o.x_label = "Temperature (°C)";
  o.y_label = fmt::format("Conversion of {} (–)", r.key);
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
  std::size_t path_index = 0;
  for (const auto& s : r.stages) {
    x.clear();
    y.clear();
    for (const auto& p : s.profile) {
      x.push_back(p.T - kZeroCelsius);
      y.push_back(p.X);
    }
    svg::LineOptions lo;
    lo.label = fmt::format("{} ({})", s.id, stage_word(s.kind));
    lo.colour = path_colour(path_index++);
    if (s.kind == StageKind::Exchanger) {
      lo.dash = "6 3";
      lo.width = 1.5;
    } else {
      lo.dash = "";  // solid: reactor paths are told apart by colour and label
      lo.width = 2.5;
    }
    // A stirred tank jumps from inlet to outlet: its path is the two ends.
    chart.add_line(x, y, lo);
    if (!x.empty()) chart.add_text(x.back(), y.back(), s.id);
  }
  if (c.limits.T_max)
    chart.add_vline(*c.limits.T_max - kZeroCelsius, {.label = "T_max", .colour = "#D55E00"});
  if (c.limits.T_in_min) chart.add_vline(*c.limits.T_in_min - kZeroCelsius, {.label = "T_in_min"});
  if (c.target_conversion) chart.add_hline(*c.target_conversion, {.label = "target"});
  std::string caption =
      "Each stage's operating path; exchangers are the constant-conversion steps between "
      "beds.";
  if (!r.equilibrium_curve.empty())
    caption += " An adiabatic bed can approach, never cross, the equilibrium curve.";
  return {"tx-diagram", caption, std::move(chart)};
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
  svg::Chart tchart(ot), xchart(ox);
  double start = 0;
  std::size_t index = 0;
  for (const auto& s : r.stages) {
    if (s.kind == StageKind::Exchanger) continue;
    const double scale = catalyst ? *s.bulk_density : 1.0;
    std::vector<double> pos, T, X;
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
      }
    }
    const std::string label = fmt::format("{} ({})", s.id, stage_word(s.kind));
    const auto colour = std::string(svg::series_colour(index));
    tchart.add_line(pos, T, {.label = label, .colour = colour, .dash = ""});
    xchart.add_line(pos, X, {.label = label, .colour = colour, .dash = ""});
    if (start > 0) {
      tchart.add_vline(start, {.label = s.id});
      xchart.add_vline(start, {.label = s.id});
    }
    start = pos.empty() ? start : pos.back();
    ++index;
  }
  std::vector<Figure> out;
  out.push_back({"profile-temperature",
                 "Temperature along every reactor stage, end to end; a stirred tank is uniform "
                 "at its outlet state. Exchangers take no volume and show as jumps at the "
                 "boundaries.",
                 std::move(tchart)});
  out.push_back({"profile-conversion", "Overall conversion of the key along every reactor stage.",
                 std::move(xchart)});
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
    const auto colour = std::string(svg::series_colour(index++));
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
  out.push_back(tx_diagram(c, r));
  for (auto& f : profile_figures(r)) out.push_back(std::move(f));
  if (!curves.empty()) out.push_back(levenspiel_figure(curves, r.key));
  return out;
}

}  // namespace rxtrain
