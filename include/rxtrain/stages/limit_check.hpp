// The catalyst's temperature window (the case's limits.T_max and
// limits.T_in_min) against every reactor stage of a train: the one check
// that every command showing a train result uses (run, staging, compare,
// optimize, sweep). It finds, per stage,
//   * Over:  the stage's peak (StageResult::T_max) passes T_max;
//   * Under: its lowest point (StageResult::T_min) falls below T_in_min;
//   * Near:  its peak lies within `margin` below T_max (or at it), or,
//            where the stage cools below its inlet, its lowest point lies
//            within `margin` above T_in_min. An inlet chosen near T_in_min
//            (the lowest useful inlet temperature) is the designer's
//            choice, not a margin the bed eats into, so it gets no note.
// Over and Under say by how much and where the temperature first crosses
// the limit: the position from the stage's inlet (m3, and kg of catalyst
// with a bulk density), interpolated linearly in V between the two profile
// points around the crossing. A stirred tank has one temperature
// throughout and so no position; a stage fed beyond the limit crosses it
// at its inlet. Exchangers are not checked: the limits are the
// catalyst's. SI throughout (K, m3, kg); limit_finding_text() phrases a
// finding for a person (°C).
//
// Example:
//   const LimitCheck lc = check_temperature_limits(c.limits, result.stages, {.margin = 5.0});
//   for (const auto& f : lc.findings) show(limit_finding_text(f));
//   double past = lc.past("R1");  // K beyond the limits, 0 within
#pragma once

#include <optional>
#include <span>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

enum class LimitFindingKind { Over, Under, Near };
enum class LimitBound { TMax, TInMin };

// "over", "under", "near"; "T_max", "T_in_min".
const char* limit_finding_kind_name(LimitFindingKind kind);
const char* limit_bound_name(LimitBound bound);

// A peak counts as passing T_max (a lowest point as falling below
// T_in_min) only when it lies beyond the limit by more than this fraction
// of it: 1e-6 (under 0.001 K at 900 K) is where a bed cut at the limit by
// the integrator's root on its temperature lands. Within it the stage is
// at the limit: a Near finding with by = 0.
inline constexpr double kLimitRelativeTolerance = 1e-6;

struct LimitFinding {
  std::string stage;  // stage id
  LimitFindingKind kind = LimitFindingKind::Over;
  LimitBound bound = LimitBound::TMax;  // T_max for Over; T_in_min for Under
  double limit = 0;                     // K, the limit's value
  double T = 0;                         // K: the stage's peak (T_max) or lowest point (T_in_min)
  double T_in = 0;                      // K, the stage's inlet
  // K, >= 0: how far T lies beyond the limit (Over, Under) or inside it
  // (Near).
  double by = 0;
  // Over, Under: the stage is fed beyond the limit (the crossing is its
  // inlet, V = 0).
  bool at_inlet = false;
  bool tank = false;  // a stirred tank: one temperature throughout, no position
  // Over, Under: where T first crosses the limit, m3 from the stage's
  // inlet. Empty for a tank, for a Near finding, and where the profile
  // holds only the stage's ends (LimitCheckOptions::locate off).
  std::optional<double> V;
  std::optional<double> catalyst_mass;  // kg of catalyst up to V (V x bulk density)
};

struct LimitCheckOptions {
  // A peak within this many kelvin of T_max gets a Near note. 5 K is
  // about the spread of thermocouples along a bed and of a feed
  // temperature's control (common practice, no source).
  double margin = 5.0;
  // Locate crossings on the stages' profiles. Off when the tubular stages
  // kept only their ends (PfrOptions::full_profile off): a line between
  // inlet and outlet would put the crossing in the wrong place.
  bool locate = true;

  // Empty when valid, else a message naming the bad field.
  std::string validate() const;
};

// The findings of one train, with what they were checked against.
struct LimitCheck {
  std::optional<double> T_max, T_in_min;  // K, the case's limits (empty: not given)
  double margin = 0;                      // K
  std::vector<LimitFinding> findings;     // train order; per stage Over/Under before Near

  // True when the case gives a limit (the check applies to its reactors).
  bool applies() const { return T_max.has_value() || T_in_min.has_value(); }
  // True when some stage passes a limit (an Over or Under finding).
  bool passed() const;
  // K by which `stage` lies beyond the limits (the larger of its Over and
  // Under amounts); 0 within them.
  double past(const std::string& stage) const;
};

LimitCheck check_temperature_limits(const TemperatureLimits& limits,
                                    std::span<const StageResult> stages,
                                    const LimitCheckOptions& options = {});

// One sentence in a plant engineer's words, display units (°C, K
// differences, m3, kg), e.g. "stage R1 passes T_max: its peak, 624.28 °C,
// is 4.28 K above T_max = 620.00 °C; it first reaches T_max at V = 49.3 m3
// (27 100 kg of catalyst) from its inlet".
std::string limit_finding_text(const LimitFinding& f, double margin);

}  // namespace rxtrain
