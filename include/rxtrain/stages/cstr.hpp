// Stirred-tank stage: outlet = contents. Newton (Eigen) on the scaled
// unknowns [F_1..F_n, T] (and ln V when sizing):
//   F_i,in - F_i + V sum_j nu_ij R_j(T, F) = 0
//   adiabatic:  sum_i F_i,in (hs_i(T) - hs_i(T_in)) + V sum_j R_j dH_j(T) = 0
//   isothermal: T = T_in, duty = V sum_j R_j dH_j(T)
// Several starts are tried (any warm starts given, the isothermal solution
// at T_in, the adiabatic limit, points between) and every distinct steady
// state is reported.
#pragma once

#include <memory>
#include <span>

#include "rxtrain/solvers/newton.hpp"
#include "rxtrain/stages/pfr.hpp"

namespace rxtrain {

struct CstrOptions {
  NewtonOptions newton;
  // Steps of the volume continuation used when Newton fails from a start.
  int continuation_steps = 40;
  // Two solutions are distinct when their temperatures differ by more.
  double distinct_T = 1e-3;  // K
  PfrOptions pfr;            // for the adiabatic-limit start
  // Warm starts for rating: states of this tank (F in mol/s, T in K; X is
  // not read), e.g. the steady states of a neighbouring sweep point, tried
  // before the cold starts. They add starts and replace none, so every
  // state the cold starts find is still found; a guess can only add one,
  // or settle a state both reach in other last digits (within the Newton
  // tolerance). Each F must have one flow per species. Not owned: the
  // states must outlive the call. Empty: cold starts only.
  std::span<const SteadyState> guesses;
};

// Reusable state of stirred-tank runs: the balances' and Newton's buffers
// and a PfrWorkspace for the adiabatic-limit start, so that repeated runs
// allocate little. Reuse does not change results: a reused workspace gives
// exactly the numbers of a fresh one. One per thread, bound to that
// thread's SunContext, which must outlive it.
class CstrWorkspace {
 public:
  explicit CstrWorkspace(const SunContext& ctx);
  ~CstrWorkspace();
  CstrWorkspace(CstrWorkspace&&) noexcept;
  CstrWorkspace& operator=(CstrWorkspace&&) noexcept;
  CstrWorkspace(const CstrWorkspace&) = delete;
  CstrWorkspace& operator=(const CstrWorkspace&) = delete;

  struct State;  // cstr.cpp
  State& state() { return *state_; }

 private:
  std::unique_ptr<State> state_;
};

StageResult run_cstr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                     const ConversionBasis& basis, const SunContext& ctx,
                     const CstrOptions& options = {});
// Same, reusing `ws` (the results are the same).
StageResult run_cstr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                     const ConversionBasis& basis, CstrWorkspace& ws,
                     const CstrOptions& options = {});

// What a stirred tank with `spec`'s heat mode and catalyst can reach at
// any size from `inlet` (see StageReach): its steady states on the branch
// from the feed, followed by continuation as the volume grows to
// options.pfr.max_space_time; the largest conversion met, and where the
// branch ends. In a tank the extents keep the ratio of the rates at the
// outlet, so with several reactions this is not the plug-flow path's
// reach. Throws SolverError when the continuation fails.
StageReach cstr_reach(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                      const ConversionBasis& basis, CstrWorkspace& workspace,
                      const CstrOptions& options = {});

}  // namespace rxtrain
