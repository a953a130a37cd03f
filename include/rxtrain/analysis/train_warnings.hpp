// Design warnings an engineer should see beside any train result (used by
// `rxtrain run` and `rxtrain staging`): plain sentences, display units (°C)
// in the text. They never stop a run.
//
//  * every finding of the result's limit check (limit_check.hpp: a peak
//    past T_max, a lowest point below T_in_min, an inlet beyond either, a
//    peak within the margin of T_max), first;
//  * the adiabatic temperature rise (fall, for an endothermic key reaction)
//    of the feed at full conversion of the key, against limits.T_max
//    (limits.T_in_min);
//  * tubular beds whose last 10 % of volume adds under 0.01 conversion
//    (catalyst, or volume in a tube without catalyst, wasted near
//    equilibrium or complete conversion);
//  * a stirred tank whose reported steady state is not stable (saddle,
//    unstable, oscillatory), or that has more than one stable steady state
//    (a multiple-steady-state region);
//  * space times outside the usual ranges, for tanks and tubes without
//    catalyst: stirred tanks about 10 min to 4 h, empty tubular reactors
//    about 0.5 s to 1 h (common practice, no source); catalyst beds are
//    judged by their space velocities.
//
// Example:
//   TrainResult r = run_train(c);
//   for (const auto& w : design_warnings(c, r)) show(w);
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

// T_ad - T_feed (K) when the key reaction alone takes the feed adiabatically
// to full conversion of the key (or of a co-reactant that runs out first):
// positive for an exothermic key reaction, negative for an endothermic one.
// Empty when no reaction consumes the key or the energy balance cannot be
// closed (a species without heat capacity).
std::optional<double> adiabatic_temperature_change(const Case& c);

std::vector<std::string> design_warnings(const Case& c, const TrainResult& result);

// How close (K) a stirred tank's ignition or extinction feed temperature
// may lie to the case's before `run` says so (analysis/stability.hpp,
// flip_warnings): 10 K, common practice, no source (a feed preheater's
// swing in an upset is of that order).
inline constexpr double kDefaultIgnitionMargin = 10.0;

// How close (K) a tubular bed's runaway critical value of its coolant
// temperature (adiabatic: its inlet temperature) may lie to the case's
// before `run` says so (analysis/runaway.hpp, runaway_warnings): 5 K,
// common practice, no source (a coolant's or preheater's control swings by
// a few kelvin in an upset).
inline constexpr double kDefaultRunawayMargin = 5.0;

// What `rxtrain run` computes, for every caller that wants the same answer
// (the command line, the Python module): run_train, then the design
// warnings, the stirred tanks' flip warnings within `ignition_margin` and
// the tubular beds' runaway warnings within `runaway_margin` (K; 0: not
// checked) appended to the result's, then the finite-number guard
// (result_guard.hpp; throws SolverError on a NaN or Inf).
TrainResult run_checked(const Case& c, const TrainOptions& options,
                        double ignition_margin = kDefaultIgnitionMargin,
                        double runaway_margin = kDefaultRunawayMargin);

}  // namespace rxtrain
