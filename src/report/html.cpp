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
                           "T in (°C / K)", "T out (°C / K)", "T peak (°C / K)", "X out",
                           "X_eq(T_out) − X", "T_eq(X) − T (K)", "duty (kW)"})
    h += fmt::format("<th>{}</th>", xml_escape(head));
  h += "</tr>\n";
  for (const auto& s : r.stages) {
    const std::string heat = heat_text(s);
    h += "<tr>" + cell(s.id, false) + cell(stage_kind_name(s.kind), false) + cell(heat, false) +
         cell(volume_text(s.volume) + (s.sized ? "*" : ""), true) +
         cell(volume_text(s.catalyst_mass), true) + cell(sig_text(s.space_time), true) +
         temperature_cell(s.inlet.T) + temperature_cell(s.outlet.T) +
         (!is_reactor(s.kind) ? cell("-", true) : temperature_cell(s.T_max)) +
         cell(fixed_text(s.conversion, 4), true) +
         cell(s.equilibrium ? fixed_text(s.equilibrium->approach_X, 4) : "-", true) +
         cell(approach_T_cell(s), true) + cell(duty_text(s), true) + "</tr>\n";
  }
  h += "</table>\n";
  bool sized = false;
  for (const auto& s : r.stages) sized = sized || s.sized;
  if (sized)
    h += "<p>* volume found from the stage's target (its conversion, or a species' outlet mole "
         "fraction).</p>\n";
  if (const auto note = approach_T_footnote(r); !note.empty())
    h += "<p>" + xml_escape(note) + ".</p>\n";
  return h;
}

// Every steady state of each stirred tank and its stability (nothing
// without tanks).
std::string steady_state_table(const TrainResult& r) {
  std::string rows;
  for (const auto& s : r.stages)
    for (const auto& ss : s.steady_states) {
      const bool known = !ss.eigenvalues.empty();
      rows += "<tr>" + cell(s.id, false) + temperature_cell(ss.T) +
              cell(conversion_text(ss.X), true) + cell(ss.outlet ? "yes" : "", false) +
              cell(known ? std::string(stability_kind_name(ss.kind)) : "-", false) +
              cell(known ? eigenvalues_text(ss.eigenvalues) : "-", false) + "</tr>\n";
    }
  if (rows.empty()) return {};
  std::string h = "<h2 id=\"steady-states\">Steady states of the stirred tanks</h2>\n<table>\n<tr>";
  for (const char* head : {"stage", "T (°C / K)", "X", "outlet", "stability", "eigenvalues (1/s)"})
    h += fmt::format("<th>{}</th>", xml_escape(head));
  h += "</tr>\n" + rows + "</table>\n";
  h += "<p>Outlet: the steady state reached from the feed. Stability from the eigenvalues of "
       "the tank's balances linearized at each state (docs/stability.md): stable, saddle (a "
       "small upset moves the tank to another state), unstable, or oscillatory (the tank swings "
       "about the state).</p>\n";
  return h;
}

// Every steady state of a loop (a train with an interchanger) and whether
// the loop holds it (nothing without a loop).
std::string loop_state_table(const TrainResult& r) {
  if (r.loop_states.empty()) return {};
  std::string h = "<h2 id=\"loop-states\">Steady states of the loop</h2>\n<table>\n<tr>";
  for (const char* head :
       {"T cold out (°C / K)", "X out", "T peak (°C / K)", "loop gain", "stability", "shown"})
    h += fmt::format("<th>{}</th>", xml_escape(head));
  h += "</tr>\n";
  for (std::size_t k = 0; k < r.loop_states.size(); ++k) {
    const LoopState& s = r.loop_states[k];
    h += "<tr>" + temperature_cell(s.T_cold_out) + cell(conversion_text(s.conversion), true) +
         temperature_cell(s.T_peak) + cell(fixed_text(s.gain, 4), true) +
         cell(s.stable() ? "stable" : "unstable", false) +
         cell(static_cast<int>(k) == r.loop_cold_start ? "yes" : "", false) + "</tr>\n";
  }
  h += "</table>\n";
  h += fmt::format(
      "<p>The interchanger's cold outlet was scanned from {} to {} °C. Loop gain: how much of a "
      "small change of the cold outlet comes back to it after one pass; a state is unstable "
      "above 1 (docs/stability.md). Shown: the cold-start state the stages above describe, "
      "reached from the feed's temperature as a plant starts up.</p>\n",
      celsius_text(r.loop_T_low), celsius_text(r.loop_T_high));
  return h;
}

// Per wanted product: each stage's yield and selectivity, cumulative from
// the feed (nothing without products).
std::string product_table(const TrainResult& r) {
  if (r.products.empty()) return {};
  std::string h = "<h2 id=\"products\">Wanted products</h2>\n<table>\n<tr><th>stage</th>";
  for (const auto& p : r.products)
    h += fmt::format("<th>yield of {0}</th><th>selectivity to {0}</th>", xml_escape(p));
  h += "</tr>\n";
  for (const auto& s : r.stages) {
    h += "<tr>" + cell(s.id, false);
    for (std::size_t k = 0; k < r.products.size(); ++k) {
      h += cell(k < s.yield.size() ? fixed_text(s.yield[k], 4) : "-", true);
      const bool has = k < s.selectivity.size() && s.selectivity[k];
      h += cell(has ? fixed_text(*s.selectivity[k], 4) : "-", true);
    }
    h += "</tr>\n";
  }
  return h + fmt::format(
                 "</table>\n<p>Cumulative from the feed, like X: yield Y = r (F_P − F_P,feed) / "
                 "F_{0},feed and selectivity S = r (F_P − F_P,feed) / (F_{0},feed − F_{0}), r = "
                 "|ν_{0} / ν_P| in the first reaction forming P, so that Y = S · X; "
                 "“-” where no {0} has been converted.</p>\n",
                 xml_escape(r.key));
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

// Stages with a bed or tubes: the bed as built and its pressure drop
// (nothing when no stage has one).
std::string bed_table(const TrainResult& r) {
  std::string rows;
  for (const auto& s : r.stages) {
    if (!s.hydraulics) continue;
    const auto& h = *s.hydraulics;
    const std::string D = h.geometry.tubes > 0 ? fmt::format("{} × {}", h.geometry.tubes,
                                                             plain_sig_text(h.geometry.diameter, 4))
                                               : plain_sig_text(h.geometry.diameter, 4);
    rows += "<tr>" + cell(s.id, false) + cell(D + (h.dP_max ? " (found)" : ""), true) +
            cell(plain_sig_text(h.length, 4), true) +
            cell(plain_sig_text(h.length / h.geometry.diameter, 3), true) +
            cell(sig_text(h.mass_flux), true) + cell(plain_sig_text(h.velocity_in, 4), true) +
            cell(plain_sig_text(h.velocity_out, 4), true) +
            cell(sig_text(h.reynolds_particle), true) + cell(bar_text(s.inlet.P), true) +
            cell(bar_text(s.outlet.P), true) +
            cell(h.dP ? bar_text(*h.dP) : std::string("- (constant pressure)"), true) + "</tr>\n";
  }
  if (rows.empty()) return {};
  return "<h2 id=\"beds\">Beds</h2>\n<table>\n<tr><th>stage</th><th>D (m; tubes × tube "
         "diameter)</th><th>L (m)</th><th>L/D</th><th>G (kg/(m² s))</th><th>u in (m/s)</th>"
         "<th>u out (m/s)</th><th>Re_p = G d_p / μ</th><th>P in (bar)</th><th>P out (bar)</th>"
         "<th>ΔP (bar, Ergun)</th></tr>\n" +
         rows + "</table>\n";
}

// The feed, every quench's side stream and every stage's outlet, one row each: conditions, totals
// and each species' molar flow; then the mole fractions. Where the species have molar masses, each
// stage's mass balance beside the stream it makes.
std::string stream_tables(const TrainResult& r) {
  const bool mass = !r.molar_mass.empty();
  std::string h =
      "<h2 id=\"streams\">Streams</h2>\n<table class=\"streams\">\n<tr><th>stream</th>"
      "<th>T (°C / K)</th><th>P (bar)</th><th>total (mol/s)</th>";
  if (mass) h += "<th>mass (kg/s)</th><th>mass balance (in − out) / in</th>";
  for (const auto& id : r.species) h += "<th>" + xml_escape(id) + " (mol/s)</th>";
  h += "</tr>\n";
  auto row = [&](const std::string& name, const Stream& s, const StageResult* from) {
    h += "<tr>" + cell(name, false) + temperature_cell(s.T) + cell(bar_text(s.P), true) +
         cell(plain_sig_text(s.total_flow()), true);
    if (mass) {
      std::string closure = "-";
      if (from && is_reactor(from->kind))
        if (const auto c = mass_balance_closure(from->inlet, from->outlet, r.molar_mass))
          closure = closure_text(*c);
      h += cell(plain_sig_text(mass_flow(s, r.molar_mass).value_or(0.0)), true) +
           cell(closure, true);
    }
    for (double f : s.F) h += cell(plain_sig_text(std::max(0.0, f)), true);
    h += "</tr>\n";
  };
  row("feed", r.feed, nullptr);
  for (const auto& s : r.stages) {
    // A quench's side stream joins before the mixed stream leaves it.
    if (s.side_stream) row(s.id + " side stream", *s.side_stream, nullptr);
    row(s.id + " outlet", s.outlet, &s);
  }
  h += "</table>\n";
  if (!mass)
    h += "<p>Mass flows are not shown: not every species has a molar mass (mw or formula).</p>\n";

  // Mole fractions, one column of common decimals per species.
  std::vector<const Stream*> streams{&r.feed};
  std::vector<std::string> names{"feed"};
  for (const auto& s : r.stages) {
    if (s.side_stream) {
      streams.push_back(&*s.side_stream);
      names.push_back(s.id + " side stream");
    }
    streams.push_back(&s.outlet);
    names.push_back(s.id + " outlet");
  }
  std::vector<std::vector<std::string>> y_cols;
  for (std::size_t i = 0; i < r.species.size(); ++i) {
    std::vector<double> column;
    for (const Stream* s : streams) column.push_back(mole_fractions(*s)[i]);
    y_cols.push_back(fraction_column(column));
  }
  h += "<table class=\"streams\">\n<tr><th>mole fractions</th>";
  for (const auto& id : r.species) h += "<th>" + xml_escape(id) + "</th>";
  h += "</tr>\n";
  for (std::size_t k = 0; k < streams.size(); ++k) {
    h += "<tr>" + cell(names[k], false);
    for (const auto& col : y_cols) h += cell(col[k], true);
    h += "</tr>\n";
  }
  return h + "</table>\n";
}

}  // namespace

std::string run_report_html(const Case& c, const TrainResult& r, const std::vector<Figure>& figures,
                            const ReportProvenance& p) {
  std::string h = html::page_begin(r.title, p);
  h += html::feed_section(c);
  h += "<h2 id=\"summary\">Stages</h2>\n" + stage_table(r);
  h += fmt::format("<p>Outlet: {} °C ({} K), {} bar; overall conversion of {} = {}.</p>\n",
                   celsius_text(r.outlet.T), fixed_text(r.outlet.T, 2), bar_text(r.outlet.P),
                   xml_escape(r.key), conversion_text(r.conversion));
  for (const auto& s : r.stages)
    if (s.outlet_target) h += "<p>" + xml_escape(purity_sentence(s, r.species)) + ".</p>\n";
  for (const auto& s : r.stages)
    if (s.exchanger_size) h += "<p>" + xml_escape(exchanger_size_sentence(s)) + ".</p>\n";
  for (const auto& s : r.stages)
    if (s.coolant) h += "<p>" + xml_escape(coolant_sentence(s)) + ".</p>\n";
  for (const auto& s : r.stages)
    if (s.side_stream) h += "<p>" + xml_escape(quench_sentence(s)) + ".</p>\n";
  for (const auto& s : r.stages)
    if (const auto x = interchanger_sentence(s); !x.empty()) h += "<p>" + xml_escape(x) + ".</p>\n";
  for (const auto& s : r.stages)
    if (!s.effectiveness.empty())
      h += "<p>" + xml_escape(effectiveness_sentence(s, r.reactions)) + ".</p>\n";
  for (const auto& s : r.stages)
    if (s.reach && s.heat) h += "<p>" + xml_escape(reach_sentence(s, r.species)) + ".</p>\n";
  h += steady_state_table(r);
  h += loop_state_table(r);
  h += product_table(r);
  h += space_velocity_table(r);
  h += bed_table(r);
  h += stream_tables(r);
  h += html::figures_section(figures);
  h += html::warnings_section(r.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
