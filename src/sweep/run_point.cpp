#include "rxtrain/sweep/run_point.hpp"

#include "rxtrain/result_guard.hpp"

namespace rxtrain::sweep {

const char* run_status_name(RunStatus s) {
  switch (s) {
    case RunStatus::Ok:
      return "ok";
    case RunStatus::Infeasible:
      return "infeasible";
    case RunStatus::SolverFailure:
      return "solver-failure";
    case RunStatus::InvalidInput:
      return "invalid-input";
  }
  return "?";
}

PointResult evaluate_point(const Case& point, const OutputSpec& outputs, PointWorkspace& ws) {
  PointResult p;
  const std::size_t n = outputs.columns().size();
  try {
    const TrainResult r = run_train(point, ws.train, ws.solver);
    check_finite(r);  // no NaN may become a number in a row
    p.outputs.reserve(n);
    for (std::size_t i = 0; i < n; ++i) p.outputs.push_back(outputs.extract(i, r));
    set_warm_starts(r, ws.train.warm_starts);
    return p;
  } catch (const InfeasibleError& e) {
    p.status = RunStatus::Infeasible;
    p.message = e.message();
  } catch (const InputError& e) {
    // run_train reports a target beyond reach as an InputError at the
    // stage's entry: for a sweep point that is an infeasible design.
    p.status = RunStatus::Infeasible;
    p.message = e.message();
  } catch (const SolverError& e) {
    p.status = RunStatus::SolverFailure;
    p.message = e.what();
  }
  p.outputs.assign(n, std::nullopt);
  ws.train.warm_starts.clear();
  return p;
}

}  // namespace rxtrain::sweep
