#include "rxtrain/report/staging_html.hpp"

#include <fmt/format.h>

#include <cmath>

#include "rxtrain/report/staging_report.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

using html::cell;
using html::temperature_cell;
using svg::xml_escape;

std::string optional_temperature_cell(const std::optional<double>& T) {
  return T ? temperature_cell(*T) : cell("-", true);
}

std::string as_given_table(const StagingResult& r) {
  std::string h = "<table class=\"stages\">\n";
  h += html::header_row({"stage", "type", "T in (°C / K)", "T out (°C / K)",
                         r.exothermic ? "T peak (°C / K)" : "T lowest (°C / K)", "X in", "X out",
                         "X_ad_eq", "T_ad_eq (°C / K)", "V (m³)", "note"});
  for (const auto& a : r.as_given) {
    h += "<tr>" + cell(a.id, false) + cell(stage_kind_name(a.kind), false) +
         temperature_cell(a.T_in);
    if (a.ran)
      h += temperature_cell(a.T_out) + temperature_cell(r.exothermic ? a.T_max : a.T_min);
    else
      h += cell("-", true) + cell("-", true);
    h += cell(fixed_text(a.X_in, 4), true) + cell(a.ran ? fixed_text(a.X_out, 4) : "-", true) +
         cell(fixed_text(a.X_ad_eq, 4), true) + optional_temperature_cell(a.T_ad_eq) +
         cell(a.ran ? volume_text(a.volume) : "-", true) + cell(stage_note_text(r, a), false) +
         "</tr>\n";
  }
  return h + "</table>\n";
}

std::string beds_table(const StagingResult& r) {
  std::string h = "<table class=\"stages\">\n";
  h += html::header_row({"bed", "T in (°C / K)", "T out (°C / K)",
                         r.exothermic ? "T peak (°C / K)" : "T lowest (°C / K)", "X in", "X out",
                         "X_ad_eq", "V (m³)", "catalyst (kg)", "ends at"});
  double V = 0, W = 0;
  bool all_mass = true;
  for (const auto& b : r.beds) {
    h += "<tr>" + cell(b.id, false) + temperature_cell(b.T_in) + temperature_cell(b.T_out) +
         temperature_cell(r.exothermic ? b.T_max : b.T_min) + cell(fixed_text(b.X_in, 4), true) +
         cell(fixed_text(b.X_out, 4), true) + cell(fixed_text(b.X_ad_eq, 4), true) +
         cell(volume_text(b.volume), true) + cell(volume_text(b.catalyst_mass), true) +
         cell(b.ended_by, false) + "</tr>\n";
    V += b.volume;
    if (b.catalyst_mass)
      W += *b.catalyst_mass;
    else
      all_mass = false;
  }
  h += "</table>\n";
  h += fmt::format("<p>Total: {} m³{}.</p>\n", volume_text(V),
                   all_mass ? fmt::format(", {} kg of catalyst", volume_text(W)) : "");
  return h;
}

std::string exchangers_table(const StagingResult& r) {
  std::string h = "<table>\n";
  h += html::header_row({r.exothermic ? "cooler" : "heater", "after", "T in (°C / K)",
                         "T out (°C / K)", "duty (kW)"});
  for (std::size_t k = 0; k < r.coolers.size(); ++k) {
    const auto& x = r.coolers[k];
    h += "<tr>" + cell(x.id, false) + cell(k < r.beds.size() ? r.beds[k].id : "-", false) +
         temperature_cell(x.T_in) + temperature_cell(x.T_out) +
         cell(fixed_text(x.duty / 1e3, 2), true) + "</tr>\n";
  }
  h += "</table>\n<p>Duty: heat added to the stream (negative: removed).</p>\n";
  return h;
}

std::string limit_text(const std::optional<double>& T) {
  return T ? fmt::format("{} °C ({} K)", celsius_text(*T), fixed_text(*T, 2))
           : std::string("not given");
}

}  // namespace

std::vector<Figure> staging_figures(const Case& c, const StagingResult& r) {
  std::vector<Figure> out;
  if (!r.staged_run.stages.empty()) {
    const TrainResult& staged = r.staged_run;
    Figure f = tx_diagram(c, staged, "Staged beds on the temperature–conversion diagram");
    f.name = "tx-staged";
    f.caption = fmt::format(
        "The beds the staging policy builds (approach {:g}, return to {}), with the "
        "{} between them as constant-conversion steps. {}",
        r.approach, return_to_name(r.return_to), r.exothermic ? "coolers" : "heaters",
        f.caption.substr(f.caption.find('.') + 1));
    out.push_back(std::move(f));
  }
  if (!r.as_given_run.stages.empty()) {
    const TrainResult& given = r.as_given_run;
    Figure f = tx_diagram(c, given, "The train as given on the temperature–conversion diagram");
    f.name = "tx-as-given";
    out.push_back(std::move(f));
  }
  if (!r.staged_run.stages.empty()) {
    for (auto& f : profile_figures(r.staged_run)) {
      f.name += "-staged";
      f.caption = "Staged beds. " + f.caption;
      out.push_back(std::move(f));
    }
  }
  return out;
}

std::string staging_report_html(const Case& c, const StagingResult& r,
                                const std::vector<Figure>& figures, const ReportProvenance& p) {
  std::string h = html::page_begin(r.title + " — interstage-cooling check", p);
  h += html::feed_section(c);
  h += "<h2 id=\"summary\">Interstage cooling: the answer</h2>\n";
  h += fmt::format(
      "<p>Target: overall conversion of {} X = {}. Limits: T_max {}, T_in_min {}. "
      "Feed {} °C ({} K). Key reaction {}",
      xml_escape(r.key), fixed_text(r.target, 4), limit_text(r.limits.T_max),
      limit_text(r.limits.T_in_min), celsius_text(r.feed_T), fixed_text(r.feed_T, 2),
      r.exothermic ? "exothermic" : "endothermic");
  if (r.dT_ad)
    h += fmt::format("; adiabatic temperature {} of the feed at full conversion {} K",
                     *r.dT_ad >= 0 ? "rise" : "fall", fixed_text(std::abs(*r.dT_ad), 2));
  h += ".</p>\n";
  h += fmt::format(
      "<p><strong>Can the train as given reach the target?</strong> {}</p>\n",
      xml_escape(r.reachable ? fmt::format("Yes: {}.", as_given_answer_text(r))
                             : fmt::format("No (limited by {}): {}.", limit_name(r.limited_by),
                                           as_given_answer_text(r))));
  h += fmt::format("<p><strong>Is interstage {} needed, and where?</strong> {}.</p>\n",
                   r.exothermic ? "cooling" : "heating", xml_escape(staged_answer_text(r)));
  h += fmt::format(
      "<p>Policy: each bed runs until it is {} % of the way from its inlet conversion to its "
      "adiabatic equilibrium conversion X_ad_eq, or until {}, or until the target; the {} "
      "return the stream to {} (at most {} beds).</p>\n",
      fixed_text(100 * r.approach, 0), r.exothermic ? "T_max" : "T_in_min",
      r.exothermic ? "coolers" : "heaters",
      r.return_to == ReturnTo::Inlet
          ? std::string("bed 1's inlet temperature")
          : fmt::format("the maximum-rate temperature at their conversion, taking back at least "
                        "{} % of the bed's temperature change (else the bed runs on; common "
                        "practice, no source)",
                        fixed_text(100 * r.min_return, 0)),
      r.max_beds);

  h += "<h2 id=\"as-given\">The train as given</h2>\n" + as_given_table(r);
  h += "<p>X_ad_eq, T_ad_eq: where the stage's adiabatic line from its inlet meets equilibrium "
       "(the most it can reach at any size).</p>\n";
  if (!r.beds.empty()) h += "<h2 id=\"beds\">Staged beds</h2>\n" + beds_table(r);
  if (!r.coolers.empty())
    h += fmt::format("<h2 id=\"exchangers\">{} between beds</h2>\n",
                     r.exothermic ? "Coolers" : "Heaters") +
         exchangers_table(r);
  h += html::figures_section(figures);
  h += html::warnings_section(r.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
