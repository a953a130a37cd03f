#include "rxtrain/report/compare_report.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>

#include "rxtrain/base/json_number.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

std::string ranking_text(const CompareResult& r) {
  return r.sized ? fmt::format("smallest total {}", r.catalyst_objective ? "catalyst" : "volume")
                 : std::string("highest final conversion");
}

std::string ordinal(int n) {
  const char* suffix = n % 100 / 10 == 1 ? "th"
                       : n % 10 == 1     ? "st"
                       : n % 10 == 2     ? "nd"
                       : n % 10 == 3     ? "rd"
                                         : "th";
  return fmt::format("{}{}", n, suffix);
}

std::string join(const std::vector<std::string>& parts, const char* sep) {
  std::string out;
  for (const auto& p : parts) out += (out.empty() ? "" : sep) + p;
  return out;
}

// Where the heat-capacity data end, and on whose word.
std::string ceiling_text(const ThermoCeiling& t) {
  if (!t.species.empty())
    return fmt::format("the heat-capacity data reach {:.2f} °C (the top of species {}'s range)",
                       t.T - kZeroCelsius, t.species);
  return fmt::format(
      "no species states a heat-capacity range; the data are taken to hold up to {:.2f} °C "
      "({:g} K, a default window: common practice, no source)",
      t.T - kZeroCelsius, t.T);
}

// The other orders that give the same train, at most four named, and which
// stages are identical: those that trade places between the orders.
std::string same_train_text(const Layout& l, const std::vector<std::string>& case_order) {
  if (l.orders.size() < 2) return "";
  const auto& ids = l.order;
  std::vector<std::size_t> parent(ids.size());
  for (std::size_t i = 0; i < parent.size(); ++i) parent[i] = i;
  auto root = [&](std::size_t i) {
    while (parent[i] != i) i = parent[i];
    return i;
  };
  auto slot_of = [&](const std::string& id) {
    return static_cast<std::size_t>(std::find(ids.begin(), ids.end(), id) - ids.begin());
  };
  std::vector<std::string> others;
  for (std::size_t i = 1; i < l.orders.size(); ++i) {
    if (i < 5) others.push_back(join(l.orders[i], " > "));
    for (std::size_t k = 0; k < ids.size(); ++k) parent[root(slot_of(l.orders[i][k]))] = root(k);
  }
  std::vector<std::string> classes;
  for (std::size_t k = 0; k < ids.size(); ++k) {
    if (root(k) != k) continue;
    std::vector<std::string> members;
    for (const auto& id : case_order)
      if (root(slot_of(id)) == k) members.push_back(id);
    if (members.size() > 1) classes.push_back(join(members, " = "));
  }
  std::string more;
  if (l.orders.size() > 5) more = fmt::format(" and {} more", l.orders.size() - 5);
  return fmt::format("also stands for {}{} (identical stages: {})", join(others, ", "), more,
                     join(classes, "; "));
}

std::string thermo_note(const ThermoCeiling& t) {
  return fmt::format("peak above {:.2f} °C, beyond the heat-capacity data: cp extrapolated",
                     t.T - kZeroCelsius);
}

}  // namespace

std::string compare_reason_text(const Layout& l) {
  switch (l.failure) {
    case LayoutFailure::None:
      return "";
    case LayoutFailure::PassesLimit: {
      std::string s;
      for (const auto& f : l.limit_check.findings)
        if (f.kind != LimitFindingKind::Near)
          s += (s.empty() ? "" : "; ") + limit_finding_text(f, l.limit_check.margin);
      return s;
    }
    case LayoutFailure::GivesBack:
      return fmt::format(
          "ends at X = {:.4f}, short of the {:.4f} a stage is sized to: a later stage gives "
          "conversion back",
          l.conversion.value_or(0.0), l.X_sized.value_or(0.0));
    case LayoutFailure::Equilibrium:
      return "equilibrium: " + l.error;
    case LayoutFailure::Input:
      return l.error;
    case LayoutFailure::Solver:
      return "solver: " + l.error;
  }
  return "";
}

namespace {

// The stages of a layout within the margin of a limit (Near findings;
// none when the layout did not run).
std::vector<std::string> near_limit_notes(const Layout& l) {
  std::vector<std::string> notes;
  for (const auto& f : l.limit_check.findings)
    if (f.kind == LimitFindingKind::Near)
      notes.push_back(limit_finding_text(f, l.limit_check.margin));
  return notes;
}

// Everything said about a layout beside its numbers, most serious first.
std::vector<std::string> notes_of(const Layout& l, const CompareResult& r) {
  std::vector<std::string> notes;
  if (!l.feasible) notes.push_back("infeasible: " + compare_reason_text(l));
  // A layout near a temperature limit (within the margin).
  for (const auto& n : near_limit_notes(l)) notes.push_back(n);
  if (l.beyond_thermo) notes.push_back(thermo_note(r.thermo_ceiling));
  if (const std::string same = same_train_text(l, r.case_order); !same.empty())
    notes.push_back(same);
  return notes;
}

std::string peak_text(const Layout& l) {
  if (!l.T_peak || !std::isfinite(*l.T_peak)) return "-";
  return celsius_text(*l.T_peak) + (l.beyond_thermo ? "!" : "");
}

// Ranks of the feasible layouts that run beyond the heat-capacity data.
std::vector<int> ranks_beyond_thermo(const CompareResult& r) {
  std::vector<int> ranks;
  int rank = 0;
  for (const auto& l : r.layouts) {
    if (l.feasible) ++rank;
    if (l.feasible && l.beyond_thermo) ranks.push_back(rank);
  }
  return ranks;
}

std::string beyond_thermo_summary(const CompareResult& r) {
  const auto ranks = ranks_beyond_thermo(r);
  if (ranks.empty()) return "";
  std::vector<std::string> names;
  for (int k : ranks) names.push_back(std::to_string(k));
  return fmt::format(
      "{} ranked layout{} ({} {}) run{} above {:.2f} °C, beyond the heat-capacity data: "
      "{} conversion and size rest on extrapolated heat capacities; confirm them with data that "
      "cover that temperature before trusting the ranking",
      ranks.size(), ranks.size() == 1 ? "" : "s", ranks.size() == 1 ? "rank" : "ranks",
      join(names, ", "), ranks.size() == 1 ? "s" : "", r.thermo_ceiling.T - kZeroCelsius,
      ranks.size() == 1 ? "its" : "their");
}

}  // namespace

std::string layout_order_text(const Layout& l) { return join(l.order, " > "); }

std::string layout_moves_text(const Layout& l, const std::vector<std::string>& case_order) {
  if (l.moves.empty()) return "none";
  if (l.moves.size() == 2) {
    const auto& [a, b] = std::minmax(l.moves[0], l.moves[1],
                                     [](const auto& x, const auto& y) { return x.from < y.from; });
    return fmt::format("{} and {} swapped", a.stage, b.stage);
  }
  // One stage taken out and put back elsewhere, the others in their order.
  for (const auto& m : l.moves) {
    std::vector<std::string> a = case_order, b = l.order;
    std::erase(a, m.stage);
    std::erase(b, m.stage);
    if (a != b) continue;
    const std::size_t to = static_cast<std::size_t>(m.to);
    if (to == 1) return m.stage + " moved to the front";
    if (to == l.order.size()) return m.stage + " moved to the end";
    return fmt::format("{} moved between {} and {}", m.stage, l.order[to - 2], l.order[to]);
  }
  std::vector<std::string> parts;
  for (const auto& m : l.moves) parts.push_back(fmt::format("{} to {}", m.stage, ordinal(m.to)));
  return join(parts, ", ");
}

std::string compare_json_text(const CompareResult& r) {
  nlohmann::json layouts = nlohmann::json::array();
  for (const auto& l : r.layouts) {
    nlohmann::json moved = nlohmann::json::array();
    for (const auto& m : l.moves)
      moved.push_back({{"stage", m.stage}, {"from", m.from}, {"to", m.to}});
    layouts.push_back(
        {{"order", l.order},
         {"orders", l.orders},
         {"moved", moved},
         {"heat", layout_heat_name(l.heat)},
         {"case_layout", l.case_layout},
         {"feasible", l.feasible},
         {"reason", l.feasible ? nlohmann::json(nullptr) : nlohmann::json(compare_reason_text(l))},
         {"total_volume", json_number(l.total_volume)},
         {"total_catalyst", json_number(l.total_catalyst)},
         {"conversion", json_number(l.conversion)},
         {"T_peak", json_number(l.T_peak)},
         {"beyond_thermo_data", l.beyond_thermo},
         {"notes", near_limit_notes(l)}});
  }
  const auto& t = r.thermo_ceiling;
  return nlohmann::json{
             {"case_order", r.case_order},
             {"ranked_by", ranking_text(r)},
             {"thermo_ceiling",
              {{"T", t.T},
               {"species", t.species.empty() ? nlohmann::json(nullptr) : nlohmann::json(t.species)},
               {"default", t.species.empty()}}},
             {"layouts", layouts}}
             .dump(2) +
         "\n";
}

std::string format_compare_table(const CompareResult& r) {
  std::string out =
      fmt::format("Layouts, best first ({}); * = the case as written\n", ranking_text(r));
  out +=
      "Each reactor stage moves with its whole spec (size or target, type, heat, bulk "
      "density); exchangers keep their places.\n";
  // The heat-capacity data's ceiling matters only where a peak passes it.
  if (!beyond_thermo_summary(r).empty())
    out += "Peak temperatures: " + ceiling_text(r.thermo_ceiling) + "; ! marks a peak above it.\n";
  out += "\n";
  std::vector<std::vector<std::string>> rows{
      {"", "rank", "order", "heat", "moved", "V m3", "catalyst kg", "X out", "T peak °C"}};
  int rank = 0;
  for (const auto& l : r.layouts)
    rows.push_back({l.case_layout ? "*" : "", l.feasible ? std::to_string(++rank) : "-",
                    layout_order_text(l), layout_heat_name(l.heat),
                    layout_moves_text(l, r.case_order), volume_text(l.total_volume),
                    volume_text(l.total_catalyst), conversion_text(l.conversion), peak_text(l)});
  const std::string table = render_columns(rows, 5);
  // The notes go after the aligned columns, one layout per line.
  std::size_t begin = 0;
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const std::size_t end = table.find('\n', begin);
    std::string line = table.substr(begin, end - begin);
    if (i > 0) {
      const auto notes = notes_of(r.layouts[i - 1], r);
      if (!notes.empty()) line += "  " + join(notes, "; ");
    } else {
      line += "  notes";
    }
    out += line + "\n";
    begin = end + 1;
  }
  if (const std::string s = beyond_thermo_summary(r); !s.empty()) out += "\n! " + s + "\n";
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
    categories.push_back(fmt::format("{}{} ({}){}", l.case_layout ? "* " : "", layout_order_text(l),
                                     layout_heat_name(l.heat),
                                     !l.feasible       ? " – infeasible"
                                     : l.beyond_thermo ? " – ! beyond cp data"
                                                       : ""));
    std::optional<double> v = !r.sized               ? l.conversion
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
                      "have no bar; the table gives their reason.{}",
                      ranking_text(r),
                      beyond_thermo_summary(r).empty()
                          ? ""
                          : " \"! beyond cp data\" marks a layout whose peak is above the "
                            "heat-capacity data."),
          std::move(chart)};
}

std::string compare_report_html(const Case& c, const CompareResult& r,
                                const std::vector<Figure>& figures, const ReportProvenance& p) {
  using html::cell;
  std::string h = html::page_begin(c.title + " — layouts compared", p);
  h += html::feed_section(c);
  h += "<h2 id=\"summary\">Layouts</h2>\n";
  h += fmt::format(
      "<p>Every order of the reactor stages, each as written, all adiabatic and all isothermal "
      "at the feed temperature. Each reactor stage moves with its whole spec (size or target, "
      "type, heat, bulk density); exchangers keep their places. Orders that give the same train "
      "(identical stages exchanged) are one row. Best first ({}); * marks the case as "
      "written.</p>\n",
      ranking_text(r));
  if (const std::string s = beyond_thermo_summary(r); !s.empty()) {
    h += "<p>Peak temperatures: " + svg::xml_escape(ceiling_text(r.thermo_ceiling)) +
         "; ! marks a peak above it.</p>\n";
    h += "<p class=\"caution\"><strong>! " + svg::xml_escape(s) + ".</strong></p>\n";
  }
  h += "<table class=\"stages\">\n";
  h += html::header_row({"", "rank", "order", "heat", "moved", "V total (m³)", "catalyst (kg)",
                         "conversion", "T peak (°C / K)", "notes"});
  int rank = 0;
  for (const auto& l : r.layouts) {
    std::string peak = cell("-", true);
    if (l.T_peak && std::isfinite(*l.T_peak)) {
      peak = html::temperature_cell(*l.T_peak);
      if (l.beyond_thermo) peak.insert(peak.find("<br/>"), "<strong> !</strong>");
    }
    h += "<tr>" + cell(l.case_layout ? "*" : "", false) +
         cell(l.feasible ? std::to_string(++rank) : "-", true) +
         // An order reads as one unit; wrapped at each ">" it reads as a list.
         "<td style=\"white-space: nowrap\">" + svg::xml_escape(layout_order_text(l)) + "</td>" +
         cell(layout_heat_name(l.heat), false) + cell(layout_moves_text(l, r.case_order), false) +
         cell(volume_text(l.total_volume), true) + cell(volume_text(l.total_catalyst), true) +
         cell(conversion_text(l.conversion), true) + peak +
         cell(join(notes_of(l, r), "; "), false) + "</tr>\n";
  }
  h += "</table>\n";
  h += html::figures_section(figures);
  h += html::warnings_section(c.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
