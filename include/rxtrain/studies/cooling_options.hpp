// The cooling options side by side (`rxtrain staging CASE --options`): for
// the case's train-level target within its limits, three ways to take the
// heat of an exothermic reaction out, each with the least catalyst its
// policy allows. SI units throughout (T in K, masses kg, duties W, areas m2).
//
//  1. Intercooled: adiabatic beds with intercoolers. run_staging's staged
//     answer (staging.hpp) gives the number of beds; optimize_design
//     (optimize.hpp) then places that many beds' inlet temperatures and
//     conversions for the least catalyst, and the row is that optimum when
//     it applies (one reversible reaction, T_in_min and T_max) and needs
//     less than staging's policy — else staging's answer, with why. Its
//     coolers are sized (models/heat_exchange.hpp) with the U and utility
//     of the case's first exchanger that gives them.
//  2. Quench: adiabatic beds with cold shots of fresh feed available at
//     quench_T. Each bed runs as staging's beds do (to `approach` of the way
//     to its X_ad_eq, or to T_max, or to the target); each shot is the share
//     of the feed that brings the mixed stream back to bed 1's inlet
//     temperature. Bed 1's flow is the feed less every share, so the shares
//     are solved together: the mixing fixes each shot relative to the flow
//     already fed (the beds' paths do not depend on the flow's scale), and
//     the shares follow from those ratios at once. The fewest beds reaching
//     the target; when dilution by the unconverted shots keeps the target
//     out of reach, the most the converter reaches (over 1..max_beds beds).
//     The design is then run as a train of quench stages (run_train).
//  3. Cooled: one multitubular reactor with a constant coolant temperature
//     (the tubes and U of the case's first reactor, or given), sized to the
//     target: the coolant temperature needing the least catalyst with the
//     peak below T_max, by a scan of the coolant temperature between
//     T_in_min (feed T - 100 K without it) and T_max, then a bracketed
//     refinement (the edge of the peak limit by bisection, an inner minimum
//     by Brent's minimizer).
//
// Example:
//   CoolingOptionsOptions o;
//   o.quench_T = 453.15;
//   const CoolingOptionsResult r = run_cooling_options(c, o);
//   for (const CoolingOption& x : r.options) show(x.kind, x.feasible, x.catalyst_mass);
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/studies/staging.hpp"

namespace rxtrain {

enum class CoolingKind { Intercooled, Quench, Cooled };
// "intercooled", "quench", "cooled".
const char* cooling_kind_name(CoolingKind k);

// Why an option is infeasible or skipped (report/ phrases it with the
// option's numbers).
enum class CoolingShortfall {
  None,
  // Intercooled and quench: max_beds beds (or the beds until one could not
  // progress) stop short of the target; `conversion` is the most reached.
  TargetMissed,
  NoQuenchT,         // quench: no quench_T given (skipped)
  QuenchNotColder,   // quench: quench_T is not below bed 1's inlet temperature
  Endothermic,       // quench, cooled: the key reaction takes heat in
  NoTMax,            // cooled: the case gives no T_max to keep the peak below
  NoTubes,           // cooled: neither the case's first reactor nor the options give tubes and U
  PeakAboveTMax,     // cooled: every coolant T that reaches the target passes T_max
  TargetOutOfReach,  // cooled: no coolant T in the range reaches the target
};

// The tubes and wall coefficient of the cooled option.
struct TubeBundleSpec {
  int count = 0;
  double diameter = 0;  // m, inside
  double U = 0;         // W/(m2 K), on the inner surface
};

struct CoolingOptionsOptions {
  // The intercooled option and the quench option's beds: approach,
  // max_beds and the solvers (return_to is always Inlet here).
  StagingOptions staging;
  // K: the temperature of the fresh feed used for cold shots (the feed
  // before its preheater); empty: the quench option is skipped.
  std::optional<double> quench_T;
  // Overrides the case's tubes and U for the cooled option; fields left 0
  // come from the case's first reactor.
  TubeBundleSpec tubes;
  // Coolant temperatures tried by the cooled option's scan before its
  // refinement.
  int coolant_scan_points = 41;

  std::string validate() const;  // empty when valid
};

struct CoolingOption {
  CoolingKind kind = CoolingKind::Intercooled;
  bool feasible = false;
  bool skipped = false;  // not computed (NoQuenchT, NoTubes, NoTMax, Endothermic)
  CoolingShortfall why = CoolingShortfall::None;
  std::optional<int> beds;              // intercooled, quench
  std::optional<int> tubes;             // cooled
  std::optional<double> tube_diameter;  // m, cooled
  std::optional<double> U;              // W/(m2 K), cooled
  std::optional<double> catalyst_mass;  // kg, total
  std::optional<double> volume;         // m3, total
  // W, heat taken out of the reacting stream: the coolers' duties, the
  // coolant's duty, or what the cold shots take up as they warm to the
  // mixed temperature.
  std::optional<double> heat_removed;
  // m2: the tubes' inner surface (cooled); the coolers' areas together
  // (intercooled) when an exchanger of the case gives U and a utility.
  std::optional<double> area;
  std::optional<double> T_peak;           // K, the hottest point of any bed
  std::optional<double> margin_to_T_max;  // K, T_max - T_peak
  std::optional<double> coolant_T;        // K, cooled
  std::optional<double> conversion;       // overall key conversion at the outlet
  // Quench: each shot's share of the feed (Q1, ...); bed 1 gets 1 - sum.
  std::vector<double> shares;
  // Intercooled: the exchanger of the case whose U and utility sized the
  // coolers (the first that gives both; empty when none does), and whether
  // its utility crosses a cooler's temperatures (no area then).
  std::string sized_like;
  bool utility_cross = false;
  // Intercooled: the row is optimize's optimum for `beds` beds; staging's
  // policy answer for the same beds beside it (kg, or m3 for per-volume
  // rates); the heat the optimum's feed exchanger adds (W; 0 when bed 1
  // takes the feed as it is). Not optimized: why (optimum_note).
  bool optimized = false;
  std::optional<double> staging_total;
  double feed_conditioning_duty = 0;
  std::string optimum_note;
  // Cooled: the coolant range scanned and the trials run.
  double coolant_T_lo = 0, coolant_T_hi = 0;
  int trials = 0;
  // The train the option describes (for the diagram); empty when skipped.
  TrainResult train;
};

struct CoolingOptionsResult {
  std::string title;
  std::string key;
  double target = 0;
  TemperatureLimits limits;
  double feed_T = 0;  // K
  std::optional<double> quench_T;
  double approach = 0.9;
  int max_beds = 10;
  // Feasible options first, by catalyst mass; then the infeasible ones,
  // then the skipped, each in the order intercooled, quench, cooled.
  std::vector<CoolingOption> options;
  // The case's (loader) warnings, then each option's stage warnings,
  // "KIND: ..." (the trains' own, as run_train and staging give them).
  std::vector<std::string> warnings;
};

// Throws what run_staging throws for a case it cannot study (no target, no
// reversible key reaction, a quench in the train, ...); SolverError when a
// stage fails numerically.
CoolingOptionsResult run_cooling_options(const Case& c, const CoolingOptionsOptions& options = {});

}  // namespace rxtrain
