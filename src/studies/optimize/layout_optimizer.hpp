// Internal to the design optimizer (design.hpp): the N-bed layout problem
// and its solution with NLopt. SI units.
//
// Decision vector x: the scaled inlet temperatures z_n = (T_in,n - T_lo) /
// (T_hi - T_lo) of beds 1..N (bed 1 left out when its inlet is fixed),
// then s_1..s_{N-1}, the fraction of the way from each bed's inlet
// conversion to its X_e at which it ends. Objective: the total size over
// its value at the first start. Constraints (<= 0): per bed, its far-end
// temperature against the window (scaled by the window's width) and a
// forward-running inlet (X_in + 1e-9 - X_e); the last bed able to reach
// the target (target - X_in - s_max (X_e - X_in)).
#pragma once

#include <functional>
#include <optional>
#include <vector>

#include "adiabatic_bed.hpp"
#include "rxtrain/studies/optimize.hpp"

namespace rxtrain::detail {

struct LayoutProblem {
  const AdiabaticBedModel* model = nullptr;
  int beds = 1;
  bool fixed_first = false;
  double T_feed = 0;
  double X0 = 0;              // conversion of the feed
  double target = 0;          // X_out of the last bed
  double T_lo = 0, T_hi = 0;  // the window: T_in_min, T_max
  bool exothermic = true;
  double s_min = 1e-4, s_max = 1 - 1e-6;

  int n_temperatures() const { return fixed_first ? beds - 1 : beds; }
  int n_variables() const { return n_temperatures() + beds - 1; }
  int n_constraints() const { return 2 * beds + 1; }
};

// One layout in physical terms.
struct LayoutState {
  std::vector<double> T_in, T_out, X_in, X_out, X_e, size;
  double total = 0;
  std::vector<double> constraints;  // as in the header comment, <= 0 feasible
  bool evaluable = true;            // false: a bed's balance could not be solved
  double violation() const;         // largest constraint value (0 when none > 0)
};

// The derivatives of a layout's total and constraints in x, by the chain
// rule through the beds (forward mode on the model's analytic partials).
struct LayoutGradient {
  std::vector<double> total;        // n_variables
  std::vector<double> constraints;  // n_constraints x n_variables, row-major
};

// The layout at x; with `gradient`, also its derivatives (zero where the
// layout cannot be evaluated).
LayoutState evaluate_layout(const LayoutProblem& p, const std::vector<double>& x,
                            LayoutGradient* gradient = nullptr);

// A start in physical terms: inlet temperatures and outlet conversions of
// every bed (X_out of the last is replaced by the target).
struct StartLayout {
  std::vector<double> T_in;
  std::vector<double> X_out;
};

std::vector<double> start_vector(const LayoutProblem& p, const StartLayout& s);

struct LayoutSolution {
  std::vector<double> x;
  LayoutState state;
  bool feasible = false;
  long evaluations = 0;
  int starts = 0;
  int polish_rounds = 0;
};

// Every start by SLSQP (COBYLA, then SLSQP, where SLSQP ends without a
// feasible point), the best feasible kept (the least violation when none
// is), then SLSQP polish rounds until no inlet moves more than T_settle.
LayoutSolution solve_layout(const LayoutProblem& p, const std::vector<StartLayout>& starts,
                            const DesignOptions& o,
                            const std::function<void(const DesignProgress&)>& progress);

}  // namespace rxtrain::detail
