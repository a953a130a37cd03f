#include "rxtrain/report/compare_report.hpp"

#include <fmt/format.h>

#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>

#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

nlohmann::json number(const std::optional<double>& v) {
  return v && std::isfinite(*v) ? nlohmann::json(*v) : nlohmann::json(nullptr);
}

std::string text(const std::optional<double>& v, const char* f) {
  return v && std::isfinite(*v) ? fmt::format(fmt::runtime(f), *v) : std::string("-");
}

// A feasible layout's notes near a limit, for its table cell.
std::string notes_text(const Layout& l) {
  std::string s;
  for (const auto& n : l.notes) s += (s.empty() ? "" : "; ") + n;
  return s;
}

std::string ranking_text(const CompareResult& r) {
  return r.sized ? fmt::format("smallest total {}", r.catalyst_objective ? "catalyst" : "volume")
                 : std::string("highest final conversion");
}

}  // namespace

std::string layout_order_text(const Layout& l) {
  std::string order;
  for (const auto& id : l.order) order += (order.empty() ? "" : " > ") + id;
  return order;
}

std::string compare_json_text(const CompareResult& r) {
  nlohmann::json layouts = nlohmann::json::array();
  for (const auto& l : r.layouts)
    layouts.push_back({{"order", l.order},
                       {"heat", layout_heat_name(l.heat)},
                       {"case_layout", l.case_layout},
                       {"feasible", l.feasible},
                       {"reason", l.feasible ? nlohmann::json(nullptr) : nlohmann::json(l.reason)},
                       {"total_volume", number(l.total_volume)},
                       {"total_catalyst", number(l.total_catalyst)},
                       {"conversion", number(l.conversion)},
                       {"T_max", number(l.T_max)},
                       {"notes", l.notes}});
  return nlohmann::json{{"layouts", layouts}}.dump(2) + "\n";
}

std::string format_compare_table(const CompareResult& r) {
  std::string out =
      fmt::format("Layouts, best first ({}); * = the case as written\n", ranking_text(r));
  out += fmt::format("{:>1} {:>4}  {:<28} {:<11} {:>12} {:>13} {:>10} {:>9}  {}\n", "", "rank",
                     "order", "heat", "volume_m3", "catalyst_kg", "conversion", "T_max_K",
                     "infeasible because");
  int rank = 0;
  for (const auto& l : r.layouts)
    out += fmt::format("{:>1} {:>4}  {:<28} {:<11} {:>12} {:>13} {:>10} {:>9}  {}\n",
                       l.case_layout ? "*" : "", l.feasible ? std::to_string(++rank) : "-",
                       layout_order_text(l), layout_heat_name(l.heat), text(l.total_volume, "{:.4g}"),
                       text(l.total_catalyst, "{:.5g}"), text(l.conversion, "{:.5f}"),
                       text(l.T_max, "{:.1f}"), l.feasible ? "" : l.reason);
  // Layouts that pass no limit but come near one.
  bool any_note = false;
  rank = 0;
  for (const auto& l : r.layouts) {
    if (l.feasible) ++rank;
    if (!l.feasible || l.notes.empty()) continue;
    if (!any_note) out += "\nnear a temperature limit:\n";
    any_note = true;
    for (const auto& n : l.notes)
      out += fmt::format("  rank {} ({}, {}): {}\n", rank, layout_order_text(l),
                         layout_heat_name(l.heat), n);
  }
  return out;
}

Figure compare_figure(const CompareResult& r) {
  svg::ChartOptions o;
  o.width = 720;
  o.height = 440;
  o.legend = svg::LegendPosition::None;
  std::vector<std::string> categories;
  std::vector<double> values;
  for (const auto& l : r.layouts) {
    categories.push_back(fmt::format("{}{} ({}){}", l.case_layout ? "* " : "",
                                     layout_order_text(l), layout_heat_name(l.heat),
                                     l.feasible ? "" : " – infeasible"));
    std::optional<double> v = !r.sized                ? l.conversion
                              : r.catalyst_objective ? l.total_catalyst
                                                     : l.total_volume;
    values.push_back(l.feasible && v ? *v : std::numeric_limits<double>::quiet_NaN());
  }
  if (!r.sized) {
    o.title = "Final conversion of each layout";
    o.y_label = "Overall conversion of the key (–)";
  } else if (r.catalyst_objective) {
    o.title = "Total catalyst each layout needs";
    o.y_label = "Total catalyst mass (kg)";
  } else {
    o.title = "Total volume each layout needs";
    o.y_label = "Total reactor volume (m³)";
  }
  o.x_label = "Layout: reactor order (heat mode), best first";
  svg::Chart chart(o);
  chart.add_bars(categories, values, {.label = "", .colour = std::string(svg::series_colour(0))});
  return {"compare-layouts",
          fmt::format("Layouts best first ({}); * marks the case as written. Infeasible layouts "
                      "have no bar; the table gives their reason.",
                      ranking_text(r)),
          std::move(chart)};
}

std::string compare_report_html(const Case& c, const CompareResult& r,
                                const std::vector<Figure>& figures, const ReportProvenance& p) {
  using html::cell;
  std::string h = html::page_begin(c.title + " — layouts compared", p);
  h += "<h2 id=\"summary\">Layouts</h2>\n";
  h += fmt::format(
      "<p>Every order of the reactor stages, each as written, all adiabatic and all isothermal "
      "at the feed temperature; exchangers keep their positions. Best first ({}); * marks the "
      "case as written.</p>\n",
      ranking_text(r));
  h += "<table class=\"stages\">\n";
  h += html::header_row({"", "rank", "order", "heat", "V total (m³)", "catalyst (kg)",
                         "conversion", "T max (°C / K)", "infeasible because, or a note"});
  int rank = 0;
  for (const auto& l : r.layouts) {
    h += "<tr>" + cell(l.case_layout ? "*" : "", false) +
         cell(l.feasible ? std::to_string(++rank) : "-", true) +
         cell(layout_order_text(l), false) + cell(layout_heat_name(l.heat), false) +
         cell(text(l.total_volume, "{:.4g}"), true) + cell(text(l.total_catalyst, "{:.5g}"), true) +
         cell(text(l.conversion, "{:.5f}"), true) +
         (l.T_max && std::isfinite(*l.T_max) ? html::temperature_cell(*l.T_max)
                                             : cell("-", true)) +
         cell(l.feasible ? notes_text(l) : l.reason, false) + "</tr>\n";
  }
  h += "</table>\n";
  h += html::figures_section(figures);
  h += html::warnings_section(c.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
