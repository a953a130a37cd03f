#include "rxtrain/report/optimize_text.hpp"

#include <fmt/format.h>

#include <cmath>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/report/staging_report.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

std::string low_label(const DesignResult& d) {
  return d.margin > 0 ? fmt::format("T_in_min + {:g} K", d.margin) : std::string("T_in_min");
}
std::string high_label(const DesignResult& d) {
  return d.margin > 0 ? fmt::format("T_max - {:g} K", d.margin) : std::string("T_max");
}

const std::string& bed_id(const DesignLayout& l, int n) { return l.bed.at(n).id; }

// The limit in plain words: "B1 ends at T_max".
std::string limit_words(const DesignResult& d, const DesignLayout& l, const ActiveLimit& a) {
  const std::string& id = bed_id(l, a.bed);
  switch (a.limit) {
    case BedLimit::InletAtLow:
      return fmt::format("{} is fed at {}", id, low_label(d));
    case BedLimit::InletAtHigh:
      return fmt::format("{} is fed at {}", id, high_label(d));
    case BedLimit::InletFixed:
      return fmt::format("{} is fed at the feed temperature (--fixed-feed-T)", id);
    case BedLimit::FarEndAtHigh:
      return fmt::format("{} ends at {}", id, high_label(d));
    case BedLimit::FarEndAtLow:
      return fmt::format("{} ends at {}", id, low_label(d));
    case BedLimit::AtEquilibriumEnd:
      return fmt::format("{} runs to its adiabatic equilibrium", id);
  }
  return id;
}

std::string joined(const std::vector<std::string>& parts, const char* last = " and ") {
  std::string s;
  for (std::size_t i = 0; i < parts.size(); ++i)
    s += (i == 0 ? "" : i + 1 == parts.size() ? last : ", ") + parts[i];
  return s;
}

std::string exempt_words(const DesignResult& d, const DesignLayout& l,
                         const std::vector<ActiveLimit>& a) {
  std::vector<std::string> w;
  for (const auto& x : a) w.push_back(limit_words(d, l, x));
  return joined(w);
}

std::string exchanger_name(const DesignLayout& l, const InterstageCondition& c) {
  return fmt::format("{} ({} to {})", l.coolers.at(c.after).id, bed_id(l, c.after),
                     bed_id(l, c.after + 1));
}

std::string rate_change(const InterstageCondition& c) {
  return fmt::format("the rate after it is {} % {} than before it",
                     fixed_text(100 * std::abs(c.residual), 2),
                     c.residual < 0 ? "lower" : "higher");
}

}  // namespace

std::string active_limit_text(const DesignResult& d, const DesignLayout& l, const ActiveLimit& a) {
  const std::string& id = bed_id(l, a.bed);
  switch (a.limit) {
    case BedLimit::InletAtLow:
      return fmt::format("{}.T_in = {}", id, low_label(d));
    case BedLimit::InletAtHigh:
      return fmt::format("{}.T_in = {}", id, high_label(d));
    case BedLimit::InletFixed:
      return fmt::format("{}.T_in = T_feed (fixed)", id);
    case BedLimit::FarEndAtHigh:
      return fmt::format("{}.T_max = {}", id, high_label(d));
    case BedLimit::FarEndAtLow:
      return fmt::format("{}.T_min = {}", id, low_label(d));
    case BedLimit::AtEquilibriumEnd:
      return fmt::format("{}.X_out = X_ad_eq", id);
  }
  return id;
}

const char* condition_state_name(ConditionState s) {
  switch (s) {
    case ConditionState::Holds:
      return "holds";
    case ConditionState::Limited:
      return "limited";
    case ConditionState::Missed:
      return "missed";
    case ConditionState::NotComputed:
      break;
  }
  return "not computed";
}

std::string interstage_text(const DesignResult& d, const DesignLayout& l,
                            const InterstageCondition& c) {
  const std::string name = exchanger_name(l, c);
  switch (c.state) {
    case ConditionState::Holds:
      return fmt::format(
          "{}: equal rates before and after it (within 0.01 %), as the optimum "
          "of free beds requires",
          name);
    case ConditionState::Limited:
      return fmt::format(
          "{}: not at the equal-rate point: {}, because {} (where a limit "
          "holds a bed the rule does not apply)",
          name, rate_change(c), exempt_words(d, l, c.exempt_by));
    case ConditionState::Missed:
      return fmt::format(
          "{}: {}, and no limit explains it: the optimizer stopped short of the "
          "optimum here; treat this layout with care",
          name, rate_change(c));
    case ConditionState::NotComputed:
      break;
  }
  return fmt::format("{}: the rates could not be evaluated", name);
}

std::string inlet_text(const DesignResult& d, const DesignLayout& l, const InletCondition& c) {
  const std::string& id = bed_id(l, c.bed);
  const std::string what = d.catalyst_objective ? "catalyst" : "volume";
  const std::string away =
      c.shift ? fmt::format(
                    "{} K from the inlet temperature that would need least {} for its "
                    "conversions",
                    fixed_text(std::abs(*c.shift), 2), what)
              : fmt::format(
                    "away from the inlet temperature that would need least {} for its "
                    "conversions",
                    what);
  switch (c.state) {
    case ConditionState::Holds:
      return fmt::format(
          "{}: fed at the temperature that needs least {} for its conversions "
          "(within 0.01 K)",
          id, what);
    case ConditionState::Limited:
      return fmt::format("{}: fed {}, because {}", id, away, exempt_words(d, l, c.exempt_by));
    case ConditionState::Missed:
      return fmt::format(
          "{}: fed {}, and no limit explains it: the optimizer stopped short of "
          "the optimum here; treat this layout with care",
          id, away);
    case ConditionState::NotComputed:
      break;
  }
  return fmt::format("{}: its size could not be evaluated near its inlet temperature", id);
}

std::string interstage_summary(const DesignResult& d, const DesignLayout& l) {
  if (l.interstage.empty()) return {};
  std::vector<std::string> holds;
  std::string other;
  for (const auto& c : l.interstage) {
    const std::string& id = l.coolers.at(c.after).id;
    if (c.state == ConditionState::Holds)
      holds.push_back(id);
    else if (c.state == ConditionState::Limited)
      other += fmt::format(" Not at {}: {}, so the rule does not apply ({}).", id,
                           exempt_words(d, l, c.exempt_by), rate_change(c));
    else if (c.state == ConditionState::Missed)
      other += fmt::format(
          " Not at {}, and no limit explains it ({}): the optimizer stopped "
          "short there.",
          id, rate_change(c));
    else
      other += fmt::format(" At {} the rates could not be evaluated.", id);
  }
  const char* rule = "where the rate equals the rate at the end of the bed before it";
  if (other.empty())
    return fmt::format("At the optimum each exchanger ends {} (checked: within 0.01 %).", rule);
  if (holds.empty()) return fmt::format("No exchanger here ends {}.", rule) + other;
  return fmt::format("{} {} {} (checked: within 0.01 %).", joined(holds),
                     holds.size() == 1 ? "ends" : "end", rule) +
         other;
}

std::string window_text(const DesignResult& d) {
  const std::string limits =
      fmt::format("T_in_min {} °C and T_max {} °C", celsius_text(*d.limits.T_in_min),
                  celsius_text(*d.limits.T_max));
  if (d.margin <= 0) return "within " + limits;
  return fmt::format("kept {:g} K inside the limits {}: from {} °C to {} °C", d.margin, limits,
                     celsius_text(d.window_low), celsius_text(d.window_high));
}

}  // namespace rxtrain

namespace rxtrain {

std::string as_written_text(const DesignResult& d) {
  if (!d.as_written) return {};
  const AsWrittenDesign& a = *d.as_written;
  if (!a.ran) return fmt::format("does not run: {}", a.error);
  std::vector<std::string> notes;
  if (!a.reaches_target)
    notes.push_back(
        fmt::format("reaches X = {:.4f}, short of the target {:.4f}", a.conversion, d.target));
  for (const auto& x : a.outside_window)
    notes.push_back(
        x.above ? fmt::format("{} reaches {}, above {} ({})", x.stage, celsius_unit_text(x.T),
                              high_label(d), celsius_unit_text(d.window_high))
                : fmt::format("{} runs down to {}, below {} ({})", x.stage, celsius_unit_text(x.T),
                              low_label(d), celsius_unit_text(d.window_low)));
  for (const auto& f : a.limit_check.findings)
    if (f.kind != LimitFindingKind::Near)
      notes.push_back(limit_finding_text(f, a.limit_check.margin));
  std::string s;
  for (const auto& n : notes) s += (s.empty() ? "" : "; ") + n;
  return s;
}

std::string staging_policy_text(const DesignResult& d) {
  return d.staging ? staged_answer_text(d.staging->result) : std::string();
}

bool pressure_drop_short(const DesignResult& d) {
  const auto& p = d.with_pressure_drop;
  return p && p->error.empty() && p->train.conversion < d.target - kReachTolerance;
}

std::vector<std::string> optimize_warnings(const DesignResult& d) {
  std::vector<std::string> w = d.warnings;
  if (d.check_disagrees)
    w.push_back(fmt::format(
        "the optimum's beds run by the train solver reach X = {:.6f}, not the target {:.6f}: "
        "the optimizer's quadrature and the ODE solver disagree; treat the sizes with care",
        d.best.checked_conversion, d.target));
  for (const auto& f : d.limit_check.findings)
    w.push_back("the optimum: " + limit_finding_text(f, d.limit_check.margin));
  if (const auto& p = d.with_pressure_drop) {
    if (!p->error.empty())
      w.push_back(
          "the optimum's beds, built as the case's first reactor is, do not run through "
          "with their pressure drop: " +
          p->error);
    else if (pressure_drop_short(d))
      w.push_back(fmt::format(
          "the optimum was designed at constant pressure; with its beds' pressure drop it "
          "reaches X = {:.4f}, short of the target {:.4f}: add catalyst to the last bed (or "
          "widen the beds) and rate the train with run",
          p->train.conversion, d.target));
  }
  if (const auto& dT = d.dT_ad_past_T_max)
    w.push_back(fmt::format(
        "the adiabatic temperature rise of the feed at full conversion of {} is {:.1f} K "
        "(from {} to {}), above T_max = {}: the beds are cut short by T_max or equilibrium "
        "and the stream is cooled between them",
        d.key, *dT, celsius_unit_text(d.feed_T), celsius_unit_text(d.feed_T + *dT),
        celsius_unit_text(d.limits.T_max.value_or(0.0))));
  return w;
}

}  // namespace rxtrain
