#include "rxtrain/sweep/run_point.hpp"

#include "rxtrain/analysis/result_guard.hpp"

namespace rxtrain::sweep {

const char* run_status_name(RunStatus s) {
  switch (s) {
    case RunStatus::Ok:
      return "ok";
    case RunStatus::OverLimit:
      return "over_limit";
    case RunStatus::Infeasible:
      return "infeasible";
    case RunStatus::SolverFailure:
      return "solver-failure";
    case RunStatus::InvalidInput:
      return "invalid-input";
  }
  return "?";
}

bool has_outputs(RunStatus s) { return s == RunStatus::Ok || s == RunStatus::OverLimit; }

namespace {

// The run's failure as its row's status; other exceptions go through.
template <class Run>
PointResult guarded(std::size_t columns, Run&& run) {
  PointResult p;
  try {
    return run();
  } catch (const InfeasibleError& e) {
    p.status = RunStatus::Infeasible;
    p.message = e.message();
  } catch (const InputError& e) {
    // A target not above its stage's inlet conversion is an InputError at
    // the stage's entry (a target beyond reach is an InfeasibleError,
    // above): for a sweep point either is an infeasible design.
    p.status = RunStatus::Infeasible;
    p.message = e.message();
  } catch (const SolverError& e) {
    p.status = RunStatus::SolverFailure;
    p.message = e.what();
  }
  p.outputs.assign(columns, std::nullopt);
  return p;
}

PointResult read_outputs(const TrainResult& r, const OutputSpec& outputs) {
  check_finite(r);  // no NaN may become a number in a row
  PointResult p;
  const std::size_t n = outputs.columns().size();
  p.outputs.reserve(n);
  for (std::size_t i = 0; i < n; ++i) p.outputs.push_back(outputs.extract(i, r));
  // What a lone run would print beside its table, in one cell.
  const auto add = [&](const std::string& s) { p.message += (p.message.empty() ? "" : "; ") + s; };
  const LimitCheck& lc = r.limit_check;
  for (const auto& f : lc.findings)
    if (f.kind != LimitFindingKind::Near) add(limit_finding_text(f, lc.margin));
  for (const auto& s : r.stages)
    for (const auto& w : s.warnings) add(w);
  for (const auto& f : lc.findings)
    if (f.kind == LimitFindingKind::Near) add(limit_finding_text(f, lc.margin));
  if (lc.passed()) p.status = RunStatus::OverLimit;
  return p;
}

}  // namespace

PointResult evaluate_point(const Case& point, const OutputSpec& outputs, PointWorkspace& ws) {
  bool ok = false;
  PointResult p = guarded(outputs.columns().size(), [&] {
    const TrainResult r = run_train(point, ws.train, ws.solver);
    PointResult q = read_outputs(r, outputs);
    set_warm_starts(r, ws.train.warm_starts);
    ok = true;
    return q;
  });
  if (!ok) ws.train.warm_starts.clear();
  return p;
}

PointResult evaluate_result(const TrainResult& r, const OutputSpec& outputs) {
  return guarded(outputs.columns().size(), [&] { return read_outputs(r, outputs); });
}

}  // namespace rxtrain::sweep
