#include "rxtrain/report/optimize_output.hpp"

#include <fmt/format.h>

#include <cmath>
#include <nlohmann/json.hpp>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/report/optimize_text.hpp"
#include "rxtrain/report/table.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

using nlohmann::json;

// Never a NaN or inf in the output: null instead.

// The objective's total of a layout: kg of catalyst, or m3.
double objective_total(const DesignResult& d, const DesignLayout& l) {
  return d.catalyst_objective ? l.total_catalyst.value_or(0.0) : l.total_volume;
}
std::optional<double> objective_total(const DesignResult& d, const std::optional<double>& catalyst,
                                      double volume) {
  if (d.catalyst_objective) return catalyst;
  return volume;
}

// Saving of the optimum against another total (same basis), or empty.
std::optional<double> saving(const DesignResult& d, const std::optional<double>& other) {
  if (!other) return std::nullopt;
  return *other - objective_total(d, d.best);
}

json exchanger_json(const Interstage& x) {
  return {{"id", x.id},
          {"T_in", json_number(x.T_in)},
          {"T_out", json_number(x.T_out)},
          {"duty", json_number(x.duty)}};
}

}  // namespace

namespace {

// The optimum's beds, exchangers, totals and active limits.
void put_layout(json& j, const DesignResult& d) {
  const DesignLayout& l = d.best;
  json beds = json::array();
  for (const auto& b : l.bed)
    beds.push_back({{"id", b.id},
                    {"T_in", json_number(b.T_in)},
                    {"T_out", json_number(b.T_out)},
                    {"X_in", json_number(b.X_in)},
                    {"X_out", json_number(b.X_out)},
                    {"X_ad_eq", json_number(b.X_ad_eq)},
                    {"volume", json_number(b.volume)},
                    {"catalyst_mass", json_number(b.catalyst_mass)},
                    {"rate_in", json_number(b.rate_in)},
                    {"rate_out", json_number(b.rate_out)}});
  j["beds"] = beds;
  json coolers = json::array();
  for (const auto& x : l.coolers) coolers.push_back(exchanger_json(x));
  j["coolers"] = coolers;
  j["feed_conditioning"] = exchanger_json(l.feed_conditioning);
  j["total_volume"] = json_number(l.total_volume);
  j["total_catalyst"] = json_number(l.total_catalyst);
  j["total_duty"] = json_number(l.total_duty);
  json active = json::array();
  for (const auto& a : l.active_constraints) active.push_back(active_limit_text(d, l, a));
  j["active_constraints"] = active;
}

// The optimality conditions at the optimum, each with its residual.
json conditions_json(const DesignResult& d) {
  const DesignLayout& l = d.best;
  auto exempt = [&](const std::vector<ActiveLimit>& v) {
    json e = json::array();
    for (const auto& a : v) e.push_back(active_limit_text(d, l, a));
    return e;
  };
  json interstage = json::array();
  for (const auto& c : l.interstage)
    interstage.push_back({{"exchanger", l.coolers[c.after].id},
                          {"after", l.bed[c.after].id},
                          {"X", json_number(c.X)},
                          {"rate_before", json_number(c.rate_before)},
                          {"rate_after", json_number(c.rate_after)},
                          {"residual", json_number(c.residual)},
                          {"state", condition_state_name(c.state)},
                          {"exempt_by", exempt(c.exempt_by)}});
  json inlets = json::array();
  for (const auto& c : l.inlets)
    inlets.push_back({{"bed", l.bed[c.bed].id},
                      {"dsize_dT", json_number(c.dsize_dT)},
                      {"shift", json_number(c.shift)},
                      {"state", condition_state_name(c.state)},
                      {"exempt_by", exempt(c.exempt_by)}});
  return {{"interstage", interstage}, {"inlets", inlets}};
}

// The case as written and the staging policy, against the optimum.
void put_comparisons(json& j, const DesignResult& d) {
  if (d.as_written) {
    const auto& a = *d.as_written;
    const bool comparable = a.ran && a.reaches_target && a.within_limits;
    const auto other = objective_total(d, a.total_catalyst, a.total_volume);
    const std::string note = as_written_text(d);
    j["as_written"] = {{"ran", a.ran},
                       {"conversion", a.ran ? json_number(a.conversion) : json(nullptr)},
                       {"reaches_target", a.reaches_target},
                       {"within_limits", a.within_limits},
                       {"reactors", a.reactors},
                       {"total_volume", a.ran ? json_number(a.total_volume) : json(nullptr)},
                       {"total_catalyst", json_number(a.total_catalyst)},
                       {"total_duty", a.ran ? json_number(a.total_duty) : json(nullptr)},
                       {"saving", comparable ? json_number(saving(d, other)) : json(nullptr)},
                       {"note", note.empty() ? json(nullptr) : json(note)}};
  } else {
    j["as_written"] = nullptr;
  }
  if (d.staging) {
    const auto& s = *d.staging;
    j["staging"] = {
        {"reached", s.reached},
        {"beds", s.beds},
        {"total_volume", json_number(s.total_volume)},
        {"total_catalyst", json_number(s.total_catalyst)},
        {"saving",
         s.reached ? json_number(saving(d, objective_total(d, s.total_catalyst, s.total_volume)))
                   : json(nullptr)},
        {"note", staging_policy_text(d)}};
  } else {
    j["staging"] = nullptr;
  }
}

// The best layout of each bed count (the optimum alone without --max-beds).
json by_bed_count_json(const DesignResult& d) {
  json counts = json::array();
  const std::vector<DesignLayout> one{d.best};
  for (const auto& c : d.by_bed_count.empty() ? one : d.by_bed_count)
    counts.push_back(
        {{"beds", c.beds},
         {"feasible", c.feasible},
         {"total_catalyst", c.feasible ? json_number(c.total_catalyst) : json(nullptr)},
         {"total_volume", c.feasible ? json_number(c.total_volume) : json(nullptr)},
         {"total_duty", c.feasible ? json_number(c.total_duty) : json(nullptr)},
         {"why", c.feasible ? json(nullptr) : json(shortfall_message(d, c.shortfall))}});
  return counts;
}

// {"conversion", "outlet_P", "error", "beds": [{"id", "length", "dP"}]},
// or null when the case's first reactor has no bed with a pressure drop.
json pressure_drop_json(const DesignResult& d) {
  if (!d.with_pressure_drop) return nullptr;
  const auto& p = *d.with_pressure_drop;
  if (!p.error.empty())
    return {{"conversion", nullptr},
            {"outlet_P", nullptr},
            {"error", p.error},
            {"beds", json::array()}};
  json beds = json::array();
  for (const auto& r : p.train.stages)
    if (r.hydraulics)
      beds.push_back({{"id", r.id},
                      {"length", json_number(r.hydraulics->length)},
                      {"diameter", json_number(r.hydraulics->geometry.diameter)},
                      {"dP", r.hydraulics->dP ? json_number(*r.hydraulics->dP) : json(nullptr)}});
  return {{"conversion", json_number(p.train.conversion)},
          {"outlet_P", json_number(p.train.outlet.P)},
          {"error", nullptr},
          {"beds", beds}};
}

}  // namespace

std::string optimize_json_text(const DesignResult& d) {
  json j;
  j["title"] = d.title;
  j["key"] = d.key;
  j["target"] = json_number(d.target);
  j["limits"] = {{"T_max", json_number(d.limits.T_max)},
                 {"T_in_min", json_number(d.limits.T_in_min)}};
  j["reaction"] = d.exothermic ? "exothermic" : "endothermic";
  j["objective"] = d.catalyst_objective ? "catalyst" : "volume";
  j["fixed_feed_T"] = d.fixed_feed_T;
  j["margin"] = json_number(d.margin);
  j["window"] = {{"T_low", json_number(d.window_low)}, {"T_high", json_number(d.window_high)}};
  put_layout(j, d);
  j["conditions"] = conditions_json(d);
  j["checked_conversion"] = json_number(d.best.checked_conversion);
  j["optimizer"] = {{"evaluations", d.best.evaluations},
                    {"starts", d.best.starts},
                    {"polish_rounds", d.best.polish_rounds}};
  put_comparisons(j, d);
  j["by_bed_count"] = by_bed_count_json(d);
  j["limit_check"] = limit_check_json(d.limit_check);
  j["with_pressure_drop"] = pressure_drop_json(d);
  j["warnings"] = optimize_warnings(d);
  j["caution"] = kCaution;
  return j.dump(2) + "\n";
}

namespace {

std::string amount_text(const DesignResult& d, double v) {
  return volume_text(v) + (d.catalyst_objective ? " kg" : " m3");
}

std::string gain_line(const DesignResult& d, const std::string& what, double other) {
  const double saved = other - objective_total(d, d.best);
  return fmt::format("  against {} ({}): the optimum saves {} ({} %)\n", what,
                     amount_text(d, other), amount_text(d, saved),
                     fixed_text(100 * saved / other, 1));
}

}  // namespace

namespace {

std::string header_lines(const DesignResult& d) {
  std::string out = d.title + "\n";
  out += fmt::format(
      "optimize: least total {} for an overall conversion of {} X = {} with every bed "
      "temperature {}; feed at {} °C{}\n",
      d.catalyst_objective ? "catalyst" : "bed volume (per-volume rate)", d.key,
      fixed_text(d.target, 4), window_text(d), celsius_text(d.feed_T),
      d.fixed_feed_T ? " (bed 1 kept at the feed temperature)" : "");
  out += fmt::format(
      "key reaction: {}; method: SLSQP (analytic gradients) from {} "
      "starts, polished until the inlet temperatures settle\n\n",
      d.exothermic ? "exothermic" : "endothermic", d.best.starts);
  return out;
}

// The optimum's beds, feed conditioning and exchangers.
std::string layout_tables(const DesignResult& d, const DesignLayout& l) {
  std::string out =
      fmt::format("Optimum: {} adiabatic beds, total {}\n", l.beds,
                  d.catalyst_objective
                      ? fmt::format("{} of catalyst ({} m3)", amount_text(d, *l.total_catalyst),
                                    volume_text(l.total_volume))
                      : amount_text(d, l.total_volume));
  std::vector<std::vector<std::string>> rows;
  rows.push_back({"bed", "T in °C", "T out °C", "X in", "X out", "X_ad_eq", "V m3", "cat kg"});
  for (const auto& b : l.bed)
    rows.push_back({b.id, celsius_text(b.T_in), celsius_text(b.T_out), fixed_text(b.X_in, 4),
                    fixed_text(b.X_out, 4), fixed_text(b.X_ad_eq, 4), volume_text(b.volume),
                    volume_text(b.catalyst_mass)});
  out += render_columns(rows, 1);
  const auto& f = l.feed_conditioning;
  if (d.fixed_feed_T)
    out += fmt::format("  feed conditioning: none (bed 1 is fed at the feed temperature)\n");
  else
    out += fmt::format("  feed conditioning {}: {} -> {} °C, duty {} kW\n", f.id,
                       celsius_text(f.T_in), celsius_text(f.T_out), fixed_text(f.duty / 1e3, 2));
  if (l.coolers.empty()) return out;
  std::vector<std::vector<std::string>> x;
  x.push_back({d.exothermic ? "cooler" : "heater", "after", "T in °C", "T out °C", "duty kW"});
  for (std::size_t k = 0; k < l.coolers.size(); ++k) {
    const auto& c = l.coolers[k];
    x.push_back({c.id, l.bed[k].id, celsius_text(c.T_in), celsius_text(c.T_out),
                 fixed_text(c.duty / 1e3, 2)});
  }
  out += "\n" + render_columns(x, 2);
  out += fmt::format(
      "  interstage duty in all: {} kW (heat added to the stream; negative: "
      "removed)\n",
      fixed_text(l.total_duty / 1e3, 2));
  return out;
}

// Active limits, the optimality conditions from their residuals, the check.
std::string conditions_lines(const DesignResult& d, const DesignLayout& l) {
  std::string active;
  for (const auto& a : l.active_constraints)
    active += (active.empty() ? "" : ", ") + active_limit_text(d, l, a);
  std::string out = fmt::format(
      "  active constraints: {}\n",
      active.empty() ? "none (every inlet and bed temperature lies inside the window)" : active);
  if (l.bed.size() > 1) {
    out += "  optimality conditions (Konoki 1956; Aris 1961), from the computed residuals:\n";
    for (const auto& c : l.interstage) out += "    " + interstage_text(d, l, c) + "\n";
    for (const auto& c : l.inlets) out += "    " + inlet_text(d, l, c) + "\n";
  }
  out += fmt::format("  check: run with these beds, the train reaches X = {} (target {})\n\n",
                     fixed_text(l.checked_conversion, 6), fixed_text(d.target, 4));
  return out;
}

// Against the case as written and the staging policy.
std::string gain_lines(const DesignResult& d) {
  std::string out = "Gain\n";
  if (d.as_written) {
    const auto& a = *d.as_written;
    const auto other = objective_total(d, a.total_catalyst, a.total_volume);
    const std::string what =
        fmt::format("the case as written, {} reactor{}", a.reactors, a.reactors == 1 ? "" : "s");
    if (a.ran && a.reaches_target && a.within_limits && other && *other > 0)
      out += gain_line(d, what, *other);
    else if (a.ran)
      out += fmt::format("  against {}: not comparable, it {}{}\n", what, as_written_text(d),
                         other ? fmt::format(" (it holds {})", amount_text(d, *other)) : "");
    else
      out += fmt::format("  against the case as written: it {}\n", as_written_text(d));
  }
  if (d.staging) {
    const auto& s = *d.staging;
    const auto other = objective_total(d, s.total_catalyst, s.total_volume);
    if (s.reached && other && *other > 0)
      out += gain_line(d,
                       fmt::format("the staging policy, {} bed{} (rxtrain staging)", s.beds,
                                   s.beds == 1 ? "" : "s"),
                       *other);
    else
      out += fmt::format("  against the staging policy: {}\n", staging_policy_text(d));
  }
  return out;
}

// The trade-off of --max-beds: each N's least total and what another bed saves.
std::string by_bed_count_lines(const DesignResult& d, int max_beds) {
  std::string out = fmt::format("\nBeds against total {} (--max-beds {}); * = the optimum above\n",
                                d.catalyst_objective ? "catalyst" : "volume", max_beds);
  std::vector<std::vector<std::string>> t;
  t.push_back({"", "beds", d.catalyst_objective ? "cat kg" : "V m3", "saved by this bed",
               "interstage duty kW"});
  double previous = 0;  // the total of N - 1 beds; 0 when that N is infeasible
  for (const auto& c : d.by_bed_count) {
    const bool mark = c.beds == d.best.beds;
    if (!c.feasible) {
      t.push_back({mark ? "*" : "", std::to_string(c.beds), "-", "-", "-"});
      previous = 0;
      continue;
    }
    const double total = objective_total(d, c);
    const std::string saved =
        previous > 0 ? fmt::format("{} %", fixed_text(100 * (previous - total) / previous, 2))
                     : std::string("-");
    t.push_back({mark ? "*" : "", std::to_string(c.beds), volume_text(total), saved,
                 fixed_text(c.total_duty / 1e3, 2)});
    previous = total;
  }
  out += render_columns(t, 1);
  for (const auto& c : d.by_bed_count)
    if (!c.feasible)
      out += fmt::format("  {} bed{}: {}\n", c.beds, c.beds == 1 ? "" : "s",
                         shortfall_message(d, c.shortfall));
  return out;
}

// The optimum rerun with its beds' pressure drop (a case whose first
// reactor has a bed): what it reaches, and each bed's length and dP.
std::string pressure_drop_lines(const DesignResult& d) {
  if (!d.with_pressure_drop) return {};
  const auto& p = *d.with_pressure_drop;
  std::string out = fmt::format(
      "With the pressure drop: the optimum above was designed at constant pressure, the "
      "feed's {} bar. ",
      bar_text(d.feed_P));
  if (!p.error.empty())
    return out + fmt::format(
                     "Run again with each bed built as the case's first reactor is (its bed, "
                     "pellet and the fluid's viscosity), it does not run through: {}\n\n",
                     p.error);
  out += fmt::format(
      "Run again with each bed built as the case's first reactor is (its bed, pellet and the "
      "fluid's viscosity), the same catalyst reaches X = {} (target {}{}), outlet at {} bar\n",
      fixed_text(p.train.conversion, 4), fixed_text(d.target, 4),
      pressure_drop_short(d)
          ? fmt::format(", short by {}", fixed_text(d.target - p.train.conversion, 4))
          : std::string(""),
      bar_text(p.train.outlet.P));
  std::string beds = bed_columns(p.train);
  if (!beds.empty() && beds.front() == '\n') beds.erase(0, 1);
  return out + beds + "\n";
}

}  // namespace

std::string optimize_table(const DesignResult& d, const DesignOptions& o) {
  std::string out = header_lines(d) + layout_tables(d, d.best) + conditions_lines(d, d.best);
  out += pressure_drop_lines(d);
  out += gain_lines(d);
  if (!d.by_bed_count.empty()) out += by_bed_count_lines(d, o.max_beds.value_or(0));
  return out + warnings_and_caution(optimize_warnings(d));
}

}  // namespace rxtrain
