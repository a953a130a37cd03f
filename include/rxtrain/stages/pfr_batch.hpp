// Batched tubular stages: the same stage of several runs (the points of a
// sweep) integrated as one CVODE system of independent blocks, so that
// CVODE's per-step work (step-size and order control, prediction, history
// rescaling) is paid once for all of them instead of once per run. Each
// block's error is held to the tolerances on its own (largest per-block
// WRMS norm), so every run is as accurate as when run alone; the step
// sizes are shared, so the numbers differ from a lone run's within the
// tolerance, and depend only on which runs share the batch.
//
// Beds of given volume: each block integrates its own bed on the
// normalized position s = V / V_b in [0, 1] (dy/ds = V_b f(y)), so beds of
// different volumes end together. Beds sized to a target conversion: the
// blocks share V, each run's target is a root function of its own, and a
// run's outlet is its state at its root; the integration goes on until
// every run has met its target.
#pragma once

#include <memory>
#include <span>
#include <vector>

#include "rxtrain/stages/pfr.hpp"

namespace rxtrain {

// One run's stage in a batch. The pointers must outlive the call.
struct PfrBatchItem {
  const Mechanism* mech = nullptr;
  const ReactorSpec* spec = nullptr;
  Stream inlet;
  ConversionBasis basis{0, 0};
};

// True when run_pfr_batch can take this stage: a tubular stage of given
// volume or sized to a target conversion, run for its outlet only (no full
// profile), without a stop temperature, on the dense Jacobian.
bool pfr_batchable(const Mechanism& mech, const ReactorSpec& spec, const PfrOptions& options);

// The batch integrator and buffers, kept between batches (re-created only
// when the number of runs, the state size or the options change). One
// per thread, bound to that thread's SunContext.
class PfrBatchWorkspace {
 public:
  explicit PfrBatchWorkspace(const SunContext& ctx);
  ~PfrBatchWorkspace();
  PfrBatchWorkspace(PfrBatchWorkspace&&) noexcept;
  PfrBatchWorkspace& operator=(PfrBatchWorkspace&&) noexcept;
  PfrBatchWorkspace(const PfrBatchWorkspace&) = delete;
  PfrBatchWorkspace& operator=(const PfrBatchWorkspace&) = delete;

  struct State;  // pfr_batch.cpp
  State& state() { return *state_; }
  const SunContext& context() const { return *ctx_; }

 private:
  const SunContext* ctx_;
  std::unique_ptr<State> state_;
};

// Runs every item's stage; results in item order, each as run_pfr with
// PfrOptions::full_profile = false gives it (profile: inlet and outlet;
// T_max and T_min: the ends, and where T can turn inside the bed (several
// reactions, adiabatic) also every step and every extreme between steps,
// as run_pfr finds them; stats: the whole batch's). Every item must
// pass pfr_batchable and have the same number of species, and either all
// be sized or none. Throws
// SolverError when the joint integration fails (a caller that needs the
// failing run's own message reruns the items one by one; also for a
// target out of reach or not above the inlet's conversion), InputError for
// a stage without a bulk density for a per-catalyst rate.
std::vector<StageResult> run_pfr_batch(std::span<const PfrBatchItem> items, PfrBatchWorkspace& ws,
                                       const PfrOptions& options);

}  // namespace rxtrain
