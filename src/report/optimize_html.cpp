#include "rxtrain/report/optimize_html.hpp"

#include <fmt/format.h>

#include <cmath>
#include <limits>

#include "rxtrain/report/optimize_text.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

using html::cell;
using html::temperature_cell;
using svg::xml_escape;

double objective_of(const DesignResult& d, const std::optional<double>& catalyst, double volume) {
  if (!d.catalyst_objective) return volume;
  return catalyst ? *catalyst : std::numeric_limits<double>::quiet_NaN();
}

std::string amount(const DesignResult& d, double v) {
  return volume_text(v) + (d.catalyst_objective ? " kg" : " m³");
}

std::string beds_table(const DesignLayout& l) {
  std::string h = "<table class=\"stages\">\n";
  h += html::header_row({"bed", "T in (°C / K)", "T out (°C / K)", "X in", "X out", "X_ad_eq",
                         "V (m³)", "catalyst (kg)"});
  for (const auto& b : l.bed)
    h += "<tr>" + cell(b.id, false) + temperature_cell(b.T_in) + temperature_cell(b.T_out) +
         cell(fixed_text(b.X_in, 4), true) + cell(fixed_text(b.X_out, 4), true) +
         cell(fixed_text(b.X_ad_eq, 4), true) + cell(volume_text(b.volume), true) +
         cell(volume_text(b.catalyst_mass), true) + "</tr>\n";
  return h + "</table>\n";
}

// The optimum run again with each bed built as the case's first reactor
// is (a case with a bed and a pressure drop).
std::string pressure_drop_section(const DesignResult& d) {
  if (!d.with_pressure_drop) return {};
  const auto& p = *d.with_pressure_drop;
  std::string h = fmt::format(
      "<h2 id=\"pressure-drop\">With the pressure drop</h2>\n<p>The optimum above was designed "
      "at constant pressure, the feed's {} bar. Run again with each bed built as the case's "
      "first reactor is (its bed, pellet and the fluid's viscosity; Ergun), ",
      bar_text(d.feed_P));
  if (!p.error.empty()) return h + "it does not run through: " + xml_escape(p.error) + "</p>\n";
  h += fmt::format("the same catalyst reaches X = {} (target {}){}.</p>\n",
                   fixed_text(p.train.conversion, 4), fixed_text(d.target, 4),
                   pressure_drop_short(d) ? ": <strong>short of the target</strong>" : "");
  h += "<table class=\"stages\">\n";
  h += html::header_row(
      {"bed", "diameter (m)", "length (m)", "P in (bar)", "P out (bar)", "dP (bar)", "X out"});
  for (const auto& r : p.train.stages)
    if (r.hydraulics)
      h += "<tr>" + cell(r.id, false) +
           cell(plain_sig_text(r.hydraulics->geometry.diameter, 4), true) +
           cell(plain_sig_text(r.hydraulics->length, 4), true) + cell(bar_text(r.inlet.P), true) +
           cell(bar_text(r.outlet.P), true) +
           cell(r.hydraulics->dP ? bar_text(*r.hydraulics->dP) : std::string("-"), true) +
           cell(fixed_text(r.conversion, 4), true) + "</tr>\n";
  return h + "</table>\n";
}

std::string exchangers_table(const DesignResult& d) {
  const DesignLayout& l = d.best;
  std::string h = "<table class=\"stages\">\n";
  h += html::header_row({"exchanger", "where", "T in (°C / K)", "T out (°C / K)", "duty (kW)"});
  if (!d.fixed_feed_T) {
    const auto& f = l.feed_conditioning;
    h += "<tr>" + cell(f.id, false) + cell("feed to B1", false) + temperature_cell(f.T_in) +
         temperature_cell(f.T_out) + cell(fixed_text(f.duty / 1e3, 2), true) + "</tr>\n";
  }
  for (std::size_t k = 0; k < l.coolers.size(); ++k) {
    const auto& x = l.coolers[k];
    const std::string where =
        k + 1 < l.bed.size() ? l.bed[k].id + " to " + l.bed[k + 1].id : std::string("-");
    h += "<tr>" + cell(x.id, false) + cell(where, false) + temperature_cell(x.T_in) +
         temperature_cell(x.T_out) + cell(fixed_text(x.duty / 1e3, 2), true) + "</tr>\n";
  }
  h += "</table>\n";
  h += fmt::format(
      "<p>Interstage duty in all: {} kW (heat added to the stream; negative: removed).</p>\n",
      fixed_text(l.total_duty / 1e3, 2));
  return h;
}

std::string gains(const DesignResult& d) {
  const DesignLayout& l = d.best;
  const double best = objective_of(d, l.total_catalyst, l.total_volume);
  std::string h = "<ul>\n";
  const auto line = [&](const std::string& what, double other) {
    const double saved = other - best;
    return fmt::format("<li>{} ({}): the optimum saves {} ({} %).</li>\n", xml_escape(what),
                       amount(d, other), amount(d, saved), fixed_text(100 * saved / other, 1));
  };
  if (d.as_written) {
    const auto& a = *d.as_written;
    if (a.ran && a.reaches_target && a.within_limits)
      h += line(fmt::format("Against the case as written, {} reactors", a.reactors),
                objective_of(d, a.total_catalyst, a.total_volume));
    else
      h += fmt::format(
          "<li>The case as written: {}</li>\n",
          xml_escape(as_written_text(d).empty() ? "not comparable" : as_written_text(d)));
  }
  if (d.staging) {
    const auto& s = *d.staging;
    if (s.reached)
      h += line(fmt::format("Against the staging policy, {} beds", s.beds),
                objective_of(d, s.total_catalyst, s.total_volume));
    else
      h += fmt::format("<li>The staging policy: {}</li>\n", xml_escape(staging_policy_text(d)));
  }
  return h + "</ul>\n";
}

std::string by_bed_count_table(const DesignResult& d) {
  std::string h = "<table>\n";
  h += html::header_row({"", "beds", d.catalyst_objective ? "total catalyst (kg)" : "total V (m³)",
                         "saved by the last bed", "interstage duty (kW)"});
  double previous = 0;
  for (const auto& c : d.by_bed_count) {
    const std::string mark = c.beds == d.best.beds ? "*" : "";
    if (!c.feasible) {
      h += "<tr>" + cell(mark, false) + cell(std::to_string(c.beds), true) +
           cell("infeasible", false) + cell("-", true) + cell("-", true) + "</tr>\n";
      previous = 0;
      continue;
    }
    const double total = objective_of(d, c.total_catalyst, c.total_volume);
    h +=
        "<tr>" + cell(mark, false) + cell(std::to_string(c.beds), true) +
        cell(volume_text(total), true) +
        cell(previous > 0 ? fixed_text(100 * (previous - total) / previous, 2) + " %" : "-", true) +
        cell(fixed_text(c.total_duty / 1e3, 2), true) + "</tr>\n";
    previous = total;
  }
  return h +
         "</table>\n<p>* the optimum kept. Exchanger and vessel costs are not modelled: the "
         "table shows where another bed stops paying in catalyst.</p>\n";
}

}  // namespace

std::vector<Figure> optimize_figures(const Case& c, const DesignResult& d) {
  std::vector<Figure> out;
  const TrainResult& r = d.train;
  Figure tx = tx_diagram(c, r, "The optimum on the temperature–conversion diagram");
  tx.name = "tx-optimum";
  // Which conditions hold is read from the computed residuals: a bed held
  // by a limit breaks the equal-rate rule at the exchanger after it.
  tx.caption = fmt::format(
      "The optimal {} beds and the exchangers between them (constant-conversion steps), over "
      "the equilibrium curve and the maximum-rate locus. {}",
      d.best.beds, interstage_summary(d, d.best));
  out.push_back(std::move(tx));
  for (auto& f : profile_figures(r)) {
    f.name += "-optimum";
    f.caption = "The optimum. " + f.caption;
    out.push_back(std::move(f));
  }
  if (d.by_bed_count.size() >= 2) {
    // Bars on a category axis: bed counts are whole numbers.
    std::vector<std::string> n;
    std::vector<double> total, duty;
    for (const auto& l : d.by_bed_count) {
      n.push_back(std::to_string(l.beds));
      total.push_back(l.feasible ? objective_of(d, l.total_catalyst, l.total_volume)
                                 : std::numeric_limits<double>::quiet_NaN());
      // Signed as the tables are: heat added to the stream positive.
      duty.push_back(l.feasible ? l.total_duty / 1e3 : std::numeric_limits<double>::quiet_NaN());
    }
    svg::ChartOptions co;
    co.width = 560;
    co.height = 340;
    co.legend = svg::LegendPosition::None;
    co.title = d.catalyst_objective ? "Total catalyst against the number of beds"
                                    : "Total bed volume against the number of beds";
    co.x_label = "Number of adiabatic beds";
    co.y_label = d.catalyst_objective ? "Total catalyst (kg)" : "Total bed volume (m³)";
    svg::Chart catalyst(co);
    catalyst.add_bars(n, total, {.label = "", .colour = std::string(svg::series_colour(0))});
    out.push_back({"beds-catalyst",
                   "The least total each number of beds needs, each optimized on its own; a "
                   "missing bar could not reach the target.",
                   std::move(catalyst)});
    svg::ChartOptions dopt = co;
    dopt.title = fmt::format("Interstage {} against the number of beds",
                             d.exothermic ? "cooling" : "heating");
    dopt.y_label = "Interstage duty (kW, heat added positive)";
    svg::Chart duties(dopt);
    duties.add_bars(n, duty, {.label = "", .colour = std::string(svg::series_colour(1))});
    out.push_back({"beds-duty",
                   "The total duty of the exchangers between beds at each optimum (feed "
                   "conditioning not included).",
                   std::move(duties)});
  }
  return out;
}

std::string optimize_report_html(const Case& c, const DesignResult& d,
                                 const std::vector<Figure>& figures, const ReportProvenance& p) {
  const DesignLayout& l = d.best;
  std::string h = html::page_begin(d.title + " — optimal beds", p);
  h += html::feed_section(c);
  h += "<h2 id=\"summary\">Optimum</h2>\n";
  h += fmt::format(
      "<p>Least total {} for an overall conversion of {} X = {} with every bed temperature "
      "{}; feed at {} °C{}. Key reaction {}. Method: SLSQP with "
      "analytic gradients from {} starts, polished until the inlet temperatures "
      "settle.</p>\n",
      d.catalyst_objective ? "catalyst" : "bed volume", xml_escape(d.key), fixed_text(d.target, 4),
      xml_escape(window_text(d)), celsius_text(d.feed_T),
      d.fixed_feed_T ? " (bed 1 kept at the feed temperature)" : "",
      d.exothermic ? "exothermic" : "endothermic", l.starts);
  h +=
      fmt::format("<p><strong>{} adiabatic beds, total {}{}.</strong></p>\n", l.beds,
                  amount(d, objective_of(d, l.total_catalyst, l.total_volume)),
                  d.catalyst_objective ? fmt::format(" ({} m³)", volume_text(l.total_volume)) : "");
  h += beds_table(l);
  h += "<h2 id=\"exchangers\">Exchangers</h2>\n" + exchangers_table(d);
  h += "<h2 id=\"constraints\">Active constraints and check</h2>\n";
  if (l.active_constraints.empty()) {
    h += "<p>No temperature limit is active.</p>\n";
  } else {
    h += "<ul>\n";
    for (const auto& a : l.active_constraints)
      h += fmt::format("<li><code>{}</code></li>\n", xml_escape(active_limit_text(d, l, a)));
    h += "</ul>\n";
  }
  if (l.bed.size() > 1) {
    h += "<p>Optimality conditions of staged adiabatic beds (Konoki 1956; Aris 1961), read "
         "from the computed residuals:</p>\n<ul>\n";
    for (const auto& k : l.interstage)
      h += fmt::format("<li>{}</li>\n", xml_escape(interstage_text(d, l, k)));
    for (const auto& k : l.inlets)
      h += fmt::format("<li>{}</li>\n", xml_escape(inlet_text(d, l, k)));
    h += "</ul>\n";
  }
  h += fmt::format(
      "<p>Run with these beds by the train solver, the train reaches X = {} (target {}).</p>\n",
      fixed_text(l.checked_conversion, 6), fixed_text(d.target, 4));
  h += pressure_drop_section(d);
  h += "<h2 id=\"gain\">Gain</h2>\n" + gains(d);
  if (!d.by_bed_count.empty())
    h += "<h2 id=\"by-bed-count\">Beds against catalyst</h2>\n" + by_bed_count_table(d);
  h += html::figures_section(figures);
  h += html::warnings_section(optimize_warnings(d));
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
