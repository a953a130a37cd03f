// Tubular (plug-flow / packed-bed) stage: CVODE over the reactor volume on
// states [F_1..F_n, T, Q] (Q: heat added so far, W).
//   dF_i/dV = sum_j nu_ij R_j
//   adiabatic:  dT/dV = -sum_j dH_j(T) R_j / sum_i F_i cp_i(T),  dQ/dV = 0
//   isothermal: dT/dV = 0,  dQ/dV = sum_j dH_j(T) R_j
// R_j is the rate per reactor volume (per-catalyst rates times the bulk
// density). Pressure is constant.
#pragma once

#include <memory>
#include <optional>

#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

// How CVODE's Newton iteration solves its linear systems.
enum class JacobianForm {
  // Sparse from kSparseJacobianMinSpecies species up, dense below.
  Automatic,
  // Dense LU of the full (n+2) x (n+2) matrix: cubic in the species count.
  Dense,
  // KLU on the pattern the stoichiometry gives (species i depends on
  // species k when a reaction making or using i has k in its rate law),
  // plus one dense row (energy) and column (T), and the dilution term kept
  // as an exact rank-one update (see Mechanism::rate_species).
  Sparse,
};

// Where Automatic switches to the sparse solver. Measured with tools/bench
// on the synthetic mechanisms (docs/performance.md): below about this size
// the dense LU of a small matrix is as cheap as KLU's bookkeeping; above it
// the dense factorization's n^3 cost dominates a run.
inline constexpr int kSparseJacobianMinSpecies = 40;

struct PfrOptions {
  CvodeOptions cvode;
  // Sizing integrates until the target is met or this space time (s, at
  // inlet conditions) is passed; about four months is far past any
  // practical bed, so reaching it means the target is out of reach.
  double max_space_time = 1.0e7;
  // When set, integration ends where the temperature reaches this value
  // (K), rising or falling: a bed cut at its catalyst's temperature limit.
  // The stage then ends there, short of its volume or target, without
  // error; the result's outlet is the point where T crossed it and
  // stats.message says so. A stage whose inlet is already at or beyond it
  // (on the side it moves to) ends at V = 0. Unset: no such stop.
  std::optional<double> stop_temperature;
  // Keep every integrator step as a profile point (reports, figures, the
  // design checks). When false, a stage whose temperature is monotonic
  // (one reaction, or isothermal) integrates to its end in one call and
  // keeps its inlet and outlet (and any root it stopped at) only: the same
  // steps, outlet and volume; T_max and T_min can differ by the integration
  // tolerance (a full profile near equilibrium may hold an overshoot of that
  // size). Sweeps that need no equilibrium views turn it off.
  bool full_profile = true;
  // Dense or sparse linear algebra; the results agree to the tolerances
  // (both use the exact Jacobian), only the cost differs.
  JacobianForm jacobian = JacobianForm::Automatic;
};

// Reusable state of tubular-stage runs: the CVODE integrator (re-initialized
// with CVodeReInit between stages and runs, re-created only when the size,
// the options or the sparsity pattern change) and the buffers of the
// right-hand side and Jacobian, so that repeated runs allocate next to
// nothing and the RHS and Jacobian never do. One per thread: it is bound to
// that thread's SunContext, which must outlive it.
class PfrWorkspace {
 public:
  explicit PfrWorkspace(const SunContext& ctx);
  ~PfrWorkspace();
  PfrWorkspace(PfrWorkspace&&) noexcept;
  PfrWorkspace& operator=(PfrWorkspace&&) noexcept;
  PfrWorkspace(const PfrWorkspace&) = delete;
  PfrWorkspace& operator=(const PfrWorkspace&) = delete;

  const SunContext& context() const { return *ctx_; }
  struct State;  // pfr.cpp
  State& state() { return *state_; }

 private:
  const SunContext* ctx_;
  std::unique_ptr<State> state_;
};

// True when `options` selects the sparse solver for a mechanism of n species.
bool uses_sparse_jacobian(const PfrOptions& options, int n_species);

// Rates (spec.volume or catalyst) or sizes (spec.target_conversion) one
// tubular stage. Sizing integrates over the volume to the conversion
// halfway from the inlet to the target, then over the conversion itself
// (states [F, T, Q, V], dV/dX = 1/(dX/dV)) to the target: near what the
// stage can reach dV/dX grows without bound, and only with X as the
// independent variable is the volume held to the tolerance. Where the
// conversion does not rise all the way (several reactions), the volume
// integration's first crossing stands. A target out of reach throws
// InfeasibleError quoting pfr_reach().
StageResult run_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                    const ConversionBasis& basis, const SunContext& ctx,
                    const PfrOptions& options = {});
// Same, reusing `ws` (the results are the same).
StageResult run_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                    const ConversionBasis& basis, PfrWorkspace& ws, const PfrOptions& options = {});

// What a tubular stage with `spec`'s heat mode and catalyst can reach at
// any size from `inlet` (see StageReach): the path is integrated to
// options.max_space_time (or options.stop_temperature), the key's
// conversion followed step by step and its peaks (dX/dV = 0) refined on
// the integrator's interpolating polynomial. With one reversible reaction
// the end point is the exact adiabatic (isothermal) equilibrium.
// `known` spares work the caller has done (ReachHints); the answer is the
// same path's, to the integrator's tolerance.
StageReach pfr_reach(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                     const ConversionBasis& basis, PfrWorkspace& ws, const PfrOptions& options = {},
                     const ReachHints& known = {});

// Outlet of an adiabatic tubular bed of practically unlimited size fed
// with `inlet`: the adiabatic equilibrium point (or complete conversion of
// the limiting reactant). Used as a starting point and for messages.
Stream adiabatic_limit(const Mechanism& mech, const std::vector<double>& multipliers,
                       const Stream& inlet, HeatMode heat, const SunContext& ctx,
                       const PfrOptions& options = {});
Stream adiabatic_limit(const Mechanism& mech, const std::vector<double>& multipliers,
                       const Stream& inlet, HeatMode heat, PfrWorkspace& ws,
                       const PfrOptions& options = {});

namespace detail {
// The tubular stage's right-hand side f and Jacobian at state y = [F, T, Q],
// both column-major (n+2)^2: the dense form, and the sparse form assembled
// densely (S + u w^T). For tests.
void pfr_jacobians(const Mechanism& mech, const std::vector<double>& multipliers, HeatMode heat,
                   double P, const std::vector<double>& y, std::vector<double>& f,
                   std::vector<double>& J_dense, std::vector<double>& J_sparse);
}  // namespace detail

}  // namespace rxtrain
