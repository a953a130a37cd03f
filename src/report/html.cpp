#include "rxtrain/report/html.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "rxtrain/report/approach_text.hpp"
#include "rxtrain/report/html_page.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

using html::cell;
using html::temperature_cell;
using svg::xml_escape;

std::string stage_table(const TrainResult& r) {
  std::string h = "<table class=\"stages\">\n<tr>";
  for (const char* head : {"stage", "type", "heat", "V (m³)", "catalyst (kg)", "τ (s)",
                           "T in (°C / K)", "T out (°C / K)", "T max (°C / K)", "X out",
                           "X_eq(T_out) − X", "T_eq(X) − T (K)", "duty (kW)"})
    h += fmt::format("<th>{}</th>", xml_escape(head));
  h += "</tr>\n";
  for (const auto& s : r.stages) {
    std::string heat = "-";
    if (s.heat) heat = heat_mode_name(*s.heat);
    h += "<tr>" + cell(s.id, false) + cell(stage_kind_name(s.kind), false) + cell(heat, false) +
         cell(fixed_text(s.volume, 3) + (s.sized ? "*" : ""), true) +
         cell(fixed_text(s.catalyst_mass, 1), true) + cell(sig_text(s.space_time), true) +
         temperature_cell(s.inlet.T) + temperature_cell(s.outlet.T) + temperature_cell(s.T_max) +
         cell(fixed_text(s.conversion, 4), true) +
         cell(s.equilibrium ? fixed_text(s.equilibrium->approach_X, 4) : "-", true) +
         cell(approach_T_cell(s), true) + cell(fixed_text(s.duty / 1e3, 2), true) + "</tr>\n";
  }
  h += "</table>\n";
  bool sized = false;
  for (const auto& s : r.stages) sized = sized || s.sized;
  if (sized) h += "<p>* volume found from the stage's target conversion.</p>\n";
  if (const auto note = approach_T_footnote(r); !note.empty())
    h += "<p>" + xml_escape(note) + ".</p>\n";
  return h;
}

std::string space_velocity_table(const TrainResult& r) {
  std::string rows;
  for (const auto& s : r.stages)
    if (s.ghsv || s.whsv || s.lhsv)
      rows += "<tr>" + cell(s.id, false) + cell(sig_text(s.ghsv), true) +
              cell(sig_text(s.whsv), true) + cell(sig_text(s.lhsv), true) +
              cell(space_velocity_basis_text(s.space_velocity_basis, r.species), false) + "</tr>\n";
  if (rows.empty()) return {};
  return "<table>\n<tr><th>stage</th><th>GHSV (1/h, the whole gas at 0 °C and 1 atm)</th>"
         "<th>WHSV (1/h)</th><th>LHSV (1/h)</th><th>WHSV and LHSV on the inlet flow "
         "of</th></tr>\n" +
         rows + "</table>\n";
}

std::string stream_table(const TrainResult& r) {
  std::string h =
      "<table>\n<tr><th>species</th><th>feed (mol/s)</th><th>outlet (mol/s)</th></tr>\n";
  for (std::size_t i = 0; i < r.species.size(); ++i)
    h += "<tr>" + cell(r.species[i], false) + cell(fmt::format("{:.5g}", r.feed.F[i]), true) +
         cell(fmt::format("{:.5g}", std::max(0.0, r.outlet.F[i])), true) + "</tr>\n";
  return h + "</table>\n";
}

}  // namespace

std::string run_report_html(const Case& c, const TrainResult& r, const std::vector<Figure>& figures,
                            const ReportProvenance& p) {
  std::string h = html::page_begin(r.title, p);
  h += "<h2 id=\"summary\">Stages</h2>\n" + stage_table(r);
  h += fmt::format("<p>Outlet: {} °C ({} K), {} bar; overall conversion of {} = {}.</p>\n",
                   celsius_text(r.outlet.T), fixed_text(r.outlet.T, 2),
                   fixed_text(r.outlet.P / 1e5, 3), xml_escape(r.key), fixed_text(r.conversion, 4));
  for (const auto& s : r.stages)
    if (s.reach && s.heat) h += "<p>" + xml_escape(reach_sentence(s, r.species)) + ".</p>\n";
  h += space_velocity_table(r);
  h += stream_table(r);
  h += html::figures_section(figures);
  h += html::warnings_section(r.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
