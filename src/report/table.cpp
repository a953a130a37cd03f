#include "rxtrain/report/table.hpp"

#include <fmt/format.h>
#include <fmt/ranges.h>

#include <algorithm>
#include <cmath>
#include <optional>
#include <vector>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/report/approach_text.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

// Every quench's side stream, one row each (empty without quenches).
std::string side_stream_rows(const TrainResult& result) {
  std::vector<std::vector<std::string>> rows;
  rows.push_back({"side stream", "T °C", "P bar", "total mol/s"});
  for (const auto& id : result.species) rows.front().push_back(id + " mol/s");
  bool share = false;
  for (const auto& r : result.stages) {
    if (!r.side_stream) continue;
    const Stream& s = *r.side_stream;
    rows.push_back({r.id, celsius_text(s.T), bar_text(s.P), plain_sig_text(s.total_flow())});
    for (double f : s.F) rows.back().push_back(plain_sig_text(std::max(0.0, f)));
    share = share || r.share;
  }
  if (rows.size() == 1) return {};
  return render_columns(rows, 1) +
         (share ? "(a side stream given as a share is part of the feed above: the first stage "
                  "gets the rest)\n"
                : "");
}

// Feed and outlet: molar flows, mole fractions and (with molar masses) mass
// flows, their totals, and how well each stage keeps mass.
std::string stream_columns(const TrainResult& result) {
  const auto y_feed = fraction_column(mole_fractions(result.feed));
  const auto y_out = fraction_column(mole_fractions(result.outlet));
  const auto m_feed = species_mass_flows(result.feed, result.molar_mass);
  const auto m_out = species_mass_flows(result.outlet, result.molar_mass);
  std::vector<std::vector<std::string>> fl;
  fl.push_back({"species", "feed mol/s", "feed y", "outlet mol/s", "outlet y"});
  if (m_feed) {
    fl.front().insert(fl.front().begin() + 3, "feed kg/s");
    fl.front().push_back("outlet kg/s");
  }
  auto add = [&](std::string name, double F_in, std::string yi, double F_out, std::string yo,
                 std::optional<double> kg_in, std::optional<double> kg_out) {
    fl.push_back({std::move(name), plain_sig_text(F_in), std::move(yi),
                  plain_sig_text(std::max(0.0, F_out)), std::move(yo)});
    if (m_feed) {
      fl.back().insert(fl.back().begin() + 3, plain_sig_text(*kg_in));
      fl.back().push_back(plain_sig_text(*kg_out));
    }
  };
  for (std::size_t i = 0; i < result.species.size(); ++i)
    add(result.species[i], result.feed.F[i], y_feed[i], result.outlet.F[i], y_out[i],
        m_feed ? std::optional((*m_feed)[i]) : std::nullopt,
        m_out ? std::optional((*m_out)[i]) : std::nullopt);
  add("total", result.feed.total_flow(), fixed_text(1.0, 4), result.outlet.total_flow(),
      fixed_text(1.0, 4), mass_flow(result.feed, result.molar_mass),
      mass_flow(result.outlet, result.molar_mass));
  std::string out = render_columns(fl, 1);
  out += side_stream_rows(result);
  if (!m_feed)
    return out + "mass flows: not shown, not every species has a molar mass (mw or formula)\n";
  std::string closures;
  for (const auto& r : result.stages)
    if (!is_reactor(r.kind))
      continue;  // no reaction: in = out by construction
    else if (const auto c = mass_balance_closure(r.inlet, r.outlet, result.molar_mass))
      closures += fmt::format("{}{} {}", closures.empty() ? "" : ", ", r.id, closure_text(*c));
  if (!closures.empty()) out += "mass balance per reactor, (in - out) / in: " + closures + "\n";
  return out;
}

// Per wanted product: each stage's yield and selectivity, cumulative from the
// feed like X (empty without products).
std::string product_columns(const TrainResult& result) {
  if (result.products.empty()) return {};
  std::vector<std::vector<std::string>> rows;
  rows.push_back({"stage"});
  for (const auto& p : result.products) {
    rows.front().push_back("yield " + p);
    rows.front().push_back("selectivity " + p);
  }
  for (const auto& r : result.stages) {
    rows.push_back({r.id});
    for (std::size_t k = 0; k < result.products.size(); ++k) {
      rows.back().push_back(k < r.yield.size() ? fixed_text(r.yield[k], 4) : "-");
      const bool has_s = k < r.selectivity.size() && r.selectivity[k];
      rows.back().push_back(has_s ? fixed_text(*r.selectivity[k], 4) : "-");
    }
  }
  return fmt::format(
             "\nwanted products, cumulative from the feed (yield Y = S · X; selectivity on the "
             "{} converted, \"-\" where none is):\n",
             result.key) +
         render_columns(rows, 1);
}

}  // namespace

// Cooled tubular stages: the coolant, the heat through the walls, the hot
// spot and the largest process-minus-coolant difference (empty when no
// stage is cooled).
std::string coolant_columns(const TrainResult& result) {
  std::vector<std::vector<std::string>> rows;
  for (const auto& r : result.stages) {
    if (!r.coolant || !r.hot_spot) continue;
    const auto& c = *r.coolant;
    const auto& h = *r.hot_spot;
    rows.push_back({r.id, coolant_flow_name(c.direction), plain_sig_text(c.U, 4),
                    celsius_text(c.T_in), celsius_text(c.T_out), plain_sig_text(c.duty / 1e3),
                    plain_sig_text(c.area), celsius_text(h.T), plain_sig_text(h.z, 4),
                    fixed_text(c.dT_max, 2)});
  }
  if (rows.empty()) return {};
  rows.insert(rows.begin(), {"stage", "coolant", "U W/m2K", "T_c in °C", "T_c out °C", "duty kW",
                             "wall m2", "hot spot °C", "at z m", "max T−T_c K"});
  return "\ncooled tubes (coolant T in and out in its own flow direction; duty: heat added to the "
         "process stream; wall: the tubes' inner surface; z: length from the stage inlet)\n" +
         render_columns(rows, 1);
}

// Stages with a bed or tubes: the bed as built and its pressure drop
// (empty when no stage has one).
std::string bed_columns(const TrainResult& result) {
  std::vector<std::vector<std::string>> rows;
  for (const auto& r : result.stages) {
    if (!r.hydraulics) continue;
    const auto& h = *r.hydraulics;
    const bool tubes = h.geometry.tubes > 0;
    rows.push_back(
        {r.id,
         tubes ? fmt::format("{} x {}", h.geometry.tubes, plain_sig_text(h.geometry.diameter, 4))
               : plain_sig_text(h.geometry.diameter, 4),
         plain_sig_text(h.length, 4), plain_sig_text(h.length / h.geometry.diameter, 3),
         sig_text(h.mass_flux), plain_sig_text(h.velocity_in, 4), plain_sig_text(h.velocity_out, 4),
         sig_text(h.reynolds_particle), bar_text(r.inlet.P), bar_text(r.outlet.P),
         h.dP ? bar_text(*h.dP) : std::string("-")});
  }
  if (rows.empty()) return {};
  std::string sized;
  for (const auto& r : result.stages)
    if (r.hydraulics && r.hydraulics->dP_max)
      sized += fmt::format("  {}: diameter found for dP_max = {} bar (diameter: auto)\n", r.id,
                           bar_text(*r.hydraulics->dP_max));
  rows.insert(rows.begin(), {"stage", "D m", "L m", "L/D", "G kg/m2s", "u in m/s", "u out m/s",
                             "Re_p", "P in bar", "P out bar", "dP bar"});
  return "\nbeds (D: vessel diameter, or tubes x tube diameter; L: bed length; G: mass flux; u: "
         "superficial velocity; Re_p = G d_p / mu at the inlet; dP by Ergun, \"-\": not computed, "
         "constant pressure)\n" +
         render_columns(rows, 1) + sized;
}

namespace {

// Every steady state of each stirred tank and its stability (nothing
// without tanks).
std::string steady_state_table(const TrainResult& result) {
  std::vector<std::vector<std::string>> rows;
  for (const auto& r : result.stages)
    for (const auto& ss : r.steady_states)
      rows.push_back({r.id, celsius_text(ss.T), conversion_text(ss.X), ss.outlet ? "yes" : "",
                      ss.eigenvalues.empty() ? "-" : std::string(stability_kind_name(ss.kind)),
                      ss.eigenvalues.empty() ? "-" : eigenvalues_text(ss.eigenvalues)});
  if (rows.empty()) return {};
  rows.insert(rows.begin(), {"stage", "T °C", "X", "outlet", "stability", "eigenvalues 1/s"});
  return "\nsteady states of the stirred tanks (outlet: the one reached from the feed; "
         "stability from the eigenvalues of the tank's balances linearized there, "
         "docs/stability.md)\n" +
         render_columns(rows, 1);
}

// Every steady state of the loop of a train with an interchanger, and
// whether the loop holds it (nothing without a loop).
std::string loop_state_table(const TrainResult& result) {
  if (result.loop_states.empty()) return {};
  std::vector<std::vector<std::string>> rows;
  rows.push_back({"T cold out °C", "X out", "T peak °C", "loop gain", "stability", "shown"});
  for (std::size_t k = 0; k < result.loop_states.size(); ++k) {
    const LoopState& s = result.loop_states[k];
    rows.push_back({celsius_text(s.T_cold_out), conversion_text(s.conversion),
                    celsius_text(s.T_peak), fixed_text(s.gain, 4),
                    s.stable() ? "stable" : "unstable",
                    static_cast<int>(k) == result.loop_cold_start ? "yes" : ""});
  }
  return fmt::format(
             "\nsteady states of the loop (the interchanger's cold outlet scanned from {} to {} "
             "°C; loop gain: d(T cold out fed back)/d(T cold out assumed), unstable above 1; "
             "shown: the cold-start state the stages above describe, docs/stability.md)\n",
             celsius_text(result.loop_T_low), celsius_text(result.loop_T_high)) +
         render_columns(rows, 0);
}

}  // namespace

std::string format_stage_table(const TrainResult& result) {
  std::string out;
  out += result.title + "\n";
  const double Ft = result.feed.total_flow();
  out +=
      fmt::format("feed {} °C, {} bar, {} mol/s; key species {}\n\n", celsius_text(result.feed.T),
                  bar_text(result.feed.P), plain_sig_text(Ft), result.key);

  std::vector<std::vector<std::string>> rows;
  rows.push_back({"stage", "type", "heat", "V m3", "cat kg", "tau s", "T in °C", "T out °C",
                  "T peak °C", "X out", "X_eq(T_out) − X", "T_eq(X) − T K", "duty kW"});
  bool any_sized = false;
  for (const auto& r : result.stages) {
    const bool exchanger = !is_reactor(r.kind);
    const std::string heat = heat_text(r);
    std::string V = volume_text(r.volume);
    if (r.sized) {
      V += "*";
      any_sized = true;
    }
    rows.push_back({r.id, stage_kind_name(r.kind), heat, V, volume_text(r.catalyst_mass),
                    sig_text(r.space_time), celsius_text(r.inlet.T), celsius_text(r.outlet.T),
                    exchanger ? "-" : celsius_text(r.T_max), conversion_text(r.conversion),
                    r.equilibrium ? fixed_text(r.equilibrium->approach_X, 4) : "-",
                    approach_T_cell(r), duty_text(r)});
  }
  out += render_columns(rows, 3);
  if (any_sized)
    out +=
        "* volume found from the stage's target (its conversion, or a species' outlet mole "
        "fraction)\n";
  // Only where a stage gives one: every rate in it is multiplied by it.
  std::vector<std::string> activities;
  for (const auto& r : result.stages)
    if (is_reactor(r.kind) && r.activity != 1)
      activities.push_back(fmt::format("{} {:.3g}", r.id, r.activity));
  if (!activities.empty())
    out += fmt::format("catalyst activity (multiplies every rate in the stage): {}\n",
                       fmt::join(activities, ", "));
  bool any_eq = false;
  for (const auto& r : result.stages) any_eq = any_eq || r.equilibrium.has_value();
  if (any_eq) {
    out +=
        "X_eq(T_out) − X, T_eq(X) − T: approach to equilibrium at the outlet (the equilibrium "
        "conversion at the outlet temperature, minus X; the temperature at which X is "
        "equilibrium, minus T_out)\n";
    if (const auto note = approach_T_footnote(result); !note.empty()) out += note + "\n";
  }
  for (const auto& r : result.stages)
    if (r.outlet_target) out += "  " + purity_sentence(r, result.species) + "\n";
  for (const auto& r : result.stages)
    if (r.exchanger_size) out += "  " + exchanger_size_sentence(r) + "\n";
  for (const auto& r : result.stages)
    if (r.side_stream) out += "  " + quench_sentence(r) + "\n";
  for (const auto& r : result.stages)
    if (const auto s = interchanger_sentence(r); !s.empty()) out += "  " + s + "\n";
  for (const auto& r : result.stages)
    if (!r.effectiveness.empty()) out += "  " + effectiveness_sentence(r, result.reactions) + "\n";
  for (const auto& r : result.stages)
    if (r.reach && r.heat) out += "  " + reach_sentence(r, result.species) + "\n";
  out += steady_state_table(result);
  out += loop_state_table(result);

  // Space velocities only where they apply (GHSV at 0 °C, 1 atm).
  // WHSV and LHSV on the case's space_velocity_basis, named once when every
  // stage has the same (as a case gives them), else per stage.
  std::vector<std::vector<std::string>> sv;
  std::vector<std::string> bases;
  for (const auto& r : result.stages)
    if (r.ghsv || r.whsv || r.lhsv) {
      sv.push_back({r.id, sig_text(r.ghsv), sig_text(r.whsv), sig_text(r.lhsv)});
      bases.push_back(space_velocity_basis_text(r.space_velocity_basis, result.species));
    }
  if (!sv.empty()) {
    const bool one_basis = std::all_of(bases.begin(), bases.end(),
                                       [&](const std::string& b) { return b == bases.front(); });
    sv.insert(sv.begin(), {"stage", "GHSV 1/h", "WHSV 1/h", "LHSV 1/h"});
    if (!one_basis) {
      sv.front().push_back("WHSV, LHSV on");
      for (std::size_t i = 1; i < sv.size(); ++i) sv[i].push_back(bases[i - 1]);
    }
    out += fmt::format(
        "\nspace velocities (GHSV: the whole gas at 0 °C and 1 atm; WHSV and LHSV: {} at the "
        "stage inlet, LHSV as liquid at the species' densities)\n",
        one_basis ? "on " + bases.front() : std::string("on the flows named per stage"));
    out += render_columns(sv, 1);
  }

  out += product_columns(result);
  out += bed_columns(result);
  out += coolant_columns(result);

  out += fmt::format("\noutlet: {} °C, {} bar, overall conversion of {} = {}\n",
                     celsius_text(result.outlet.T), bar_text(result.outlet.P), result.key,
                     conversion_text(result.conversion));
  out += stream_columns(result);
  return out + warnings_and_caution(result.warnings);
}

}  // namespace rxtrain
