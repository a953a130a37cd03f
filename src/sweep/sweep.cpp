#include "rxtrain/sweep/sweep.hpp"

#include "rxtrain/sweep/thread_pool.hpp"

namespace rxtrain::sweep {

std::vector<RunRow> run_sweep(const Case& base, const CasePathTable& table, const Study& study,
                              const OutputSpec& outputs, const SweepOptions& options) {
  // Plain copies, not a structured binding: clang 14 (the fuzz build)
  // cannot capture one in a lambda.
  const auto range = options.shard.range(study.run_count());
  const std::size_t first = range.first, last = range.second;
  const std::size_t count = last - first;
  const std::size_t jobs = std::min(resolve_jobs(options.jobs), std::max<std::size_t>(count, 1));
  const CaseEditor editor(table, study.paths());
  const std::size_t n_inputs = study.paths().size();

  // One working case and workspace per thread, copied once.
  struct Worker {
    Case work;
    PointWorkspace ws;
  };
  // Built one by one (not copied from a prototype) so a move-only
  // workspace fits.
  std::vector<Worker> workers;
  workers.reserve(jobs);
  for (std::size_t w = 0; w < jobs; ++w) {
    workers.emplace_back();
    workers.back().work = base;
    workers.back().ws.train = options.train;
    workers.back().ws.train.equilibrium_views = outputs.needs_equilibrium_views();
  }

  std::vector<RunRow> rows(count);
  parallel_for(
      count, jobs,
      [&](std::size_t i, std::size_t w) {
        RunRow& row = rows[i];
        row.run = first + i;
        row.inputs.assign(n_inputs, 0.0);
        study.inputs(row.run, row.inputs);
        Worker& wk = workers[w];
        try {
          editor.apply(base, row.inputs, wk.work);
        } catch (const InputError& e) {
          row.result.status = RunStatus::InvalidInput;
          row.result.message = e.message();
          row.result.outputs.assign(outputs.columns().size(), std::nullopt);
          // The working case may be half edited: start the next run afresh.
          wk.work = base;
          return;
        }
        row.result = evaluate_point(wk.work, outputs, wk.ws);
      },
      options.progress ? [&](std::size_t done) { options.progress(done, count); }
                       : std::function<void(std::size_t)>{},
      options.progress_period);
  return rows;
}

}  // namespace rxtrain::sweep
