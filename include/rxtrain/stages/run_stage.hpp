// One stage of any type run on its inlet: the single place that turns a
// StageSpec into its solver (tubular, stirred tank, exchanger). Trains,
// batched trains' exchangers and studies run their stages through it, so a
// new stage type is added here once.
#pragma once

#include "rxtrain/case/case.hpp"
#include "rxtrain/stages/cstr.hpp"
#include "rxtrain/stages/exchanger.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "rxtrain/stages/quench.hpp"
#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

// What running a stage needs besides its spec and inlet; the workspaces
// are reused from stage to stage (one per thread).
struct StageContext {
  const Mechanism& mech;
  const ConversionBasis& basis;
  PfrWorkspace& pfr;
  CstrWorkspace& cstr;
  const PfrOptions& pfr_options;
  const CstrOptions& cstr_options;
  // The case's feed, whose shares quenches add; null outside a train.
  const Stream* feed = nullptr;
};

StageResult run_stage(const StageSpec& spec, const Stream& inlet, const StageContext& ctx);

}  // namespace rxtrain
