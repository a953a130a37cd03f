// How far a tubular bed stands from runaway: the parametric sensitivity of
// its peak temperature to one numeric field of the case, and the critical
// value of that field where the sensitivity peaks (the generalized
// criterion of Morbidelli and Varma, AIChE J. 28 (1982) 705, the reference
// from memory). The normalized sensitivity S = (phi / T_peak)
// dT_peak/dphi, phi the field and T_peak the stage's highest temperature,
// both SI (kelvin), is taken by central differences of whole runs, each
// checked against the same difference at half the step
// (docs/stability.md). Results are for screening and study.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/stages/solver_options.hpp"

namespace rxtrain {

struct SensitivityOptions {
  // Points of the grid over [lo, hi], ends included (>= 3).
  int points = 101;
  // The first step of the central differences, as a fraction of the range;
  // each difference is checked against the one at half its step, and the
  // step is halved again while they disagree, at most max_halvings times.
  double step = 5e-4;
  int max_halvings = 4;
  // Two differences agree when |S_h - S_h/2| <= rtol |S_h/2| + atol.
  double rtol = 1e-3, atol = 1e-4;
  // The critical value is refined by Brent's minimization of -|S| to this
  // fraction of the range.
  double critical_tol = 1e-5;
};

// One point of the scan.
struct SensitivityPoint {
  double value = 0;   // the field, SI
  double T_peak = 0;  // K, the stage's highest temperature
  double S = 0;       // normalized sensitivity, (value / T_peak) dT_peak/dvalue
  // |S_h - S_h/2| of the accepted pair: the central difference's error is
  // about a third of it (Richardson: the error falls as h^2).
  double S_error = 0;
  bool checked = true;  // the pair agreed within the tolerance
};

// A peak of |S| counts as a runaway when it stands at least this many
// times above the least |S| around it (common practice, no source): near a
// runaway S climbs several-fold over a few kelvin, while a bed far from one
// has only a shallow maximum (an adiabatic bed past its light-off, whose S
// stays near 1).
inline constexpr double kRunawayPeakProminence = 2.0;

// The critical value: where |S| peaks over the range.
struct CriticalValue {
  double value = 0;   // SI
  double T_peak = 0;  // K, there
  double S = 0;       // there
  // value - the case's value (SI; for a temperature, K): negative when the
  // case stands above it.
  double margin = 0;
  // The case stands past the critical value on the side where the peak
  // temperature rises (above it when S > 0, below it when S < 0).
  bool beyond = false;
  // |S| here is at least kRunawayPeakProminence times its least over the
  // scan: a runaway's peak, not a shallow maximum (over a range wide
  // enough to hold the climb to it).
  bool pronounced = false;
};

// The scan's part of a StabilityResult (analysis/stability.hpp), filled by
// run_stability for a tubular stage.
struct SensitivityScan {
  std::vector<SensitivityPoint> points;
  std::optional<CriticalValue> critical;
  int runs = 0;  // whole runs of the train up to the stage
};

// The scan of stage `index` (a tubular reactor of given size, not
// isothermal) over [lo, hi] of `field`, which must belong to the stage or
// to what comes before it. Points whose runs fail are left out, each named
// in `warnings`; so are points whose differences never agree (kept, with
// checked = false). Throws SolverError when no point can be run.
SensitivityScan sensitivity_scan(const Case& c, const CaseField& field, std::size_t index,
                                 double lo, double hi, const SensitivityOptions& options,
                                 const SolverOptions& solvers, std::vector<std::string>& warnings);

// `rxtrain run`'s check of each tubular reactor of `result` that is not
// isothermal (as it ran: a sized one at the size found): a critical value
// within `margin` K of the case's, on the coolant's temperature for a
// cooled bed (its inlet temperature for a flowing coolant) and on the
// stage's inlet temperature for an adiabatic one. A coarse scan: eight
// runs of the stage alone on the inlet it ran with, at steps of margin/2
// up to twice the margin either side of the case's value; S by central
// differences of neighbours, its peak placed by a parabola through three;
// a peak counts when it stands kRunawayPeakProminence times as high as
// the window's least |S| (shallow bumps are not runaways).
// One sentence per finding (a train warning); a bed whose check fails
// gets a sentence saying so. margin <= 0: no check.
std::vector<std::string> runaway_warnings(const Case& c, const TrainResult& result, double margin,
                                          const SolverOptions& solvers = {});

}  // namespace rxtrain
