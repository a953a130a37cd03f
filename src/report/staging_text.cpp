#include <fmt/format.h>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/report/staging_report.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

std::string limit_text(const std::optional<double>& T) {
  return T ? fmt::format("{} °C", celsius_text(*T)) : std::string("not given");
}

std::string policy_text(const StagingResult& r) {
  const char* limit = r.exothermic ? "T_max" : "T_in_min";
  const char* exchangers = r.exothermic ? "coolers" : "heaters";
  std::string back = r.return_to == ReturnTo::Inlet
                         ? fmt::format("{} return the stream to bed 1's inlet temperature ({} °C)",
                                       exchangers, celsius_text(r.feed_T))
                         : fmt::format(
                               "{} return the stream to the maximum-rate temperature T_opt at its "
                               "conversion, kept within [T_in_min, T_max], taking back at least "
                               "{:.0f} % of the bed's temperature change (else the bed runs on: "
                               "ends at \"floor\"; common practice, no source)",
                               exchangers, 100 * r.min_return);
  return fmt::format(
      "policy: each bed runs until it is {:.0f} % of the way from its inlet conversion to its "
      "adiabatic equilibrium conversion X_ad_eq, or until {}{}, or until the target; {} "
      "(--approach {:g}, --return-to {}{})",
      100 * r.approach, limit,
      (r.exothermic ? r.limits.T_max : r.limits.T_in_min) ? "" : " (not given)", back, r.approach,
      return_to_name(r.return_to),
      r.return_to == ReturnTo::MaxRate ? fmt::format(", --min-return {:g}", r.min_return) : "");
}

}  // namespace

std::string format_staging_report(const StagingResult& r) {
  std::string out;
  out += r.title + "\n";
  out += fmt::format(
      "target: overall conversion of {} X = {}; limits: T_max {}, T_in_min {}; feed {} °C\n", r.key,
      fixed_text(r.target, 4), limit_text(r.limits.T_max), limit_text(r.limits.T_in_min),
      celsius_text(r.feed_T));
  out += fmt::format("key reaction: {}", r.exothermic ? "exothermic" : "endothermic");
  if (r.dT_ad)
    out += fmt::format("; adiabatic temperature {} of the feed at full conversion: {} K",
                       *r.dT_ad >= 0 ? "rise" : "fall", fixed_text(std::abs(*r.dT_ad), 2));
  out += "\n\n";

  // 1. The train as given.
  out += "Can the train as given reach the target?\n";
  if (r.reachable)
    out += fmt::format("  Yes: {}.\n", as_given_answer_text(r));
  else
    out += fmt::format("  No (limited by {}): {}.\n", limit_name(r.limited_by),
                       as_given_answer_text(r));
  std::vector<std::vector<std::string>> rows;
  // The extreme the bed runs to: hottest (exothermic) or coldest point.
  const char* extreme = r.exothermic ? "T peak °C" : "T lowest °C";
  rows.push_back({"stage", "type", "T in °C", "T out °C", extreme, "X in", "X out", "X_ad_eq",
                  "T_ad_eq °C", "V m3"});
  for (const auto& a : r.as_given) {
    if (!a.ran) {
      rows.push_back({a.id, stage_kind_name(a.kind), celsius_text(a.T_in), "-", "-",
                      fixed_text(a.X_in, 4), "-", fixed_text(a.X_ad_eq, 4),
                      a.T_ad_eq ? celsius_text(*a.T_ad_eq) : "-", "-"});
      continue;
    }
    rows.push_back({a.id, stage_kind_name(a.kind), celsius_text(a.T_in), celsius_text(a.T_out),
                    celsius_text(r.exothermic ? a.T_max : a.T_min), fixed_text(a.X_in, 4),
                    fixed_text(a.X_out, 4), fixed_text(a.X_ad_eq, 4),
                    a.T_ad_eq ? celsius_text(*a.T_ad_eq) : "-", volume_text(a.volume)});
  }
  out += render_columns(rows, 2);
  out +=
      "  X_ad_eq, T_ad_eq: where the stage's adiabatic line from its inlet meets equilibrium "
      "(the most it can reach at any size)\n";
  for (const auto& a : r.as_given)
    if (!a.notes.empty() && a.id != r.limiting_stage)
      out += fmt::format("  {}: {}\n", a.id, stage_note_text(r, a));
  out += "\n";

  // 2. The staged answer.
  out += fmt::format("Is interstage {} needed, and where?\n", r.exothermic ? "cooling" : "heating");
  out += fmt::format("  {}.\n", staged_answer_text(r));
  out += fmt::format("  {}\n", policy_text(r));
  if (!r.beds.empty()) {
    std::vector<std::vector<std::string>> b;
    b.push_back({"bed", "T in °C", "T out °C", extreme, "X in", "X out", "X_ad_eq", "V m3",
                 "cat kg", "ends at"});
    for (const auto& bed : r.beds)
      b.push_back({bed.id, celsius_text(bed.T_in), celsius_text(bed.T_out),
                   celsius_text(r.exothermic ? bed.T_max : bed.T_min), fixed_text(bed.X_in, 4),
                   fixed_text(bed.X_out, 4), fixed_text(bed.X_ad_eq, 4), volume_text(bed.volume),
                   volume_text(bed.catalyst_mass), bed.ended_by});
    out += fmt::format("\n{}", render_columns(b, 1));
    double V = 0, W = 0;
    bool all_mass = true;
    for (const auto& bed : r.beds) {
      V += bed.volume;
      if (bed.catalyst_mass)
        W += *bed.catalyst_mass;
      else
        all_mass = false;
    }
    out += fmt::format("  total: {} m3{}\n", volume_text(V),
                       all_mass ? fmt::format(", {} kg of catalyst", volume_text(W)) : "");
    // Beds built as the case's first reactor: their length and pressure drop.
    std::string beds;
    for (const auto& st : r.staged_run.stages)
      if (st.hydraulics && st.hydraulics->dP)
        beds += fmt::format("{}{} L = {} m, dP = {} bar", beds.empty() ? "" : "; ", st.id,
                            plain_sig_text(st.hydraulics->length, 4), bar_text(*st.hydraulics->dP));
    if (!beds.empty())
      out += fmt::format(
          "  beds built as the first reactor (diameter, voidage, pellet; Ergun): {}; "
          "outlet {} bar\n",
          beds, bar_text(r.staged_run.stages.back().outlet.P));
  }
  if (!r.coolers.empty()) {
    std::vector<std::vector<std::string>> x;
    x.push_back({r.exothermic ? "cooler" : "heater", "after", "T in °C", "T out °C", "duty kW"});
    for (std::size_t k = 0; k < r.coolers.size(); ++k) {
      const auto& c = r.coolers[k];
      x.push_back({c.id, r.beds[k].id, celsius_text(c.T_in), celsius_text(c.T_out),
                   fixed_text(c.duty / 1e3, 2)});
    }
    out += fmt::format("\n{}", render_columns(x, 2));
    out += "  duty: heat added to the stream (negative: removed)\n";
  }

  return out + warnings_and_caution(r.warnings);
}

}  // namespace rxtrain
