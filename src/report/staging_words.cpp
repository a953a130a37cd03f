// The staging answer in words (staging_report.hpp): the text, JSON and
// HTML reports all phrase the study's notes here.
#include <fmt/format.h>

#include "rxtrain/report/staging_report.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

// The limit a bed's temperature moves towards, and its name.
const char* limit_label(const StagingResult& r) { return r.exothermic ? "T_max" : "T_in_min"; }
std::optional<double> limit_T(const StagingResult& r) {
  return r.exothermic ? r.limits.T_max : r.limits.T_in_min;
}
std::string limit_celsius(const StagingResult& r) {
  return celsius_unit_text(limit_T(r).value_or(0.0));
}

// " within T_max = 480.00 °C" / " without falling below T_in_min = ...".
std::string within_limit(const StagingResult& r) {
  return fmt::format(" {} {} = {}", r.exothermic ? "within" : "without falling below",
                     limit_label(r), limit_celsius(r));
}

std::string beyond_equilibrium(double target, const AsGivenStage& a, const char* whose) {
  return fmt::format(
      "{} X = {:.4f} lies beyond what it can reach at any size: it meets equilibrium at X_ad_eq "
      "= {:.4f} ({})",
      whose, target, a.X_ad_eq.value_or(0.0), celsius_unit_text(a.T_ad_eq.value_or(0.0)));
}

std::string note_text(const StagingResult& r, const AsGivenStage& a, const StageNote& n) {
  const bool exo = r.exothermic;
  switch (n.kind) {
    case StageNoteKind::NotRun:
      return fmt::format("not run: stage {} before it cannot reach its own target", n.blocked_by);
    case StageNoteKind::OwnTargetBeyondEquilibrium:
      return beyond_equilibrium(n.own_target, a, "its own target");
    case StageNoteKind::TargetBeyondEquilibrium:
      return beyond_equilibrium(r.target, a, "the target");
    case StageNoteKind::FedPastLimit:
      return fmt::format("is fed at {}, already {} {} = {}", celsius_unit_text(a.T_in),
                         exo ? "above" : "below", limit_label(r), limit_celsius(r));
    case StageNoteKind::PassesLimit:
      return fmt::format(
          "{} {} = {} at X = {:.4f}, V = {:.4g} m3 from its inlet{}",
          exo ? "passes" : "falls below", limit_label(r), limit_celsius(r), n.at.X, n.at.V,
          n.before_target ? ", before the target"
                          : fmt::format(", after the target (a bed ending where X reaches {:.4f} "
                                        "would stay within it)",
                                        r.target));
    case StageNoteKind::EnlargedPassesLimit:
      return fmt::format(
          "reaches X = {:.4f}; enlarged, it would {} {} {} at X = {:.4f}, V = {:.4g} m3 from "
          "its inlet, before the target",
          a.X_out, exo ? "pass" : "fall below", limit_label(r), limit_celsius(r), n.at.X, n.at.V);
    case StageNoteKind::NeedsCatalyst:
      return fmt::format(
          "reaches X = {:.4f}; only more catalyst is needed: {:.4g} m3{} would reach the target "
          "(it holds {:.4g} m3)",
          a.X_out, n.volume_needed,
          n.catalyst_needed ? fmt::format(" ({:.4g} kg)", *n.catalyst_needed) : "",
          a.volume.value_or(0.0));
    case StageNoteKind::NeedsVolume:
      return fmt::format("reaches X = {:.4f}; only more volume is needed", a.X_out);
  }
  return {};
}

std::string stop_text(const StagingResult& r, const StagedStop& s) {
  switch (s.kind) {
    case StagedStopKind::FedPastLimit:
      return fmt::format("bed {} would be fed at {}, already {} {} = {}", s.bed,
                         celsius_unit_text(s.T), r.exothermic ? "at or above" : "at or below",
                         limit_label(r), limit_celsius(r));
    case StagedStopKind::NoProgress:
      return fmt::format(
          "bed {} cannot progress: fed at {} and X = {:.4f}, the stream is already at "
          "equilibrium",
          s.bed, celsius_unit_text(s.T), s.X);
    case StagedStopKind::EndsAtInlet:
      return fmt::format("bed {} ends at its inlet ({} {})", s.bed, limit_label(r),
                         limit_celsius(r));
    case StagedStopKind::None:
      break;
  }
  return {};
}

}  // namespace

std::string stage_note_text(const StagingResult& r, const AsGivenStage& a) {
  std::string s;
  for (std::size_t i = 0; i < a.notes.size(); ++i)
    s += (i == 0 ? "" : "; also, it ") + note_text(r, a, a.notes[i]);
  return s;
}

std::string as_given_answer_text(const StagingResult& r) {
  if (r.limited_by == StagingLimit::None)
    return fmt::format("the train as given reaches X = {:.4f} (target {:.4f}){}",
                       r.as_given_conversion, r.target,
                       limit_T(r) ? within_limit(r) : std::string(" (no temperature limit given)"));
  if (r.limiting_stage.empty()) return "the train has no reactor";
  for (const auto& a : r.as_given)
    if (a.id == r.limiting_stage)
      return fmt::format("stage {}{} {}", a.id,
                         r.limited_by == StagingLimit::Equilibrium ? ":" : "",
                         stage_note_text(r, a));
  return {};
}

std::string staged_answer_text(const StagingResult& r) {
  const char* what = r.exothermic ? "cooling" : "heating";
  const std::string within = limit_T(r) ? within_limit(r) : "";
  if (r.target_reached) {
    if (r.beds_needed == 1)
      return fmt::format("no interstage {} is needed: one adiabatic bed reaches X = {:.4f}{}", what,
                         r.target, within);
    const bool two = r.beds_needed == 2;
    return fmt::format("interstage {} is needed: {} adiabatic beds with {} {} reach X = {:.4f}{}",
                       what, r.beds_needed, r.beds_needed - 1,
                       r.exothermic ? (two ? "intercooler" : "intercoolers")
                                    : (two ? "interstage heater" : "interstage heaters"),
                       r.target, within);
  }
  std::string why =
      fmt::format("{} beds reach only X = {:.4f}", r.beds.size(), r.staged_conversion);
  if (r.stop.kind != StagedStopKind::None)
    why = r.beds.empty() ? stop_text(r, r.stop)
                         : fmt::format("{}; the beds before reach X = {:.4f}", stop_text(r, r.stop),
                                       r.staged_conversion);
  if (r.conversion_limit && r.target >= *r.conversion_limit)
    why += fmt::format(
        "; with every bed fed at {}, no number of beds passes X_eq({}) = {:.4f}, and the "
        "target X = {:.4f} lies beyond it (try --return-to max-rate, or a {} inlet temperature)",
        celsius_unit_text(r.feed_T), celsius_unit_text(r.feed_T), *r.conversion_limit, r.target,
        r.exothermic ? "lower" : "higher");
  return fmt::format("the target X = {:.4f} is out of reach with up to {} beds: {}", r.target,
                     r.max_beds, why);
}

}  // namespace rxtrain
