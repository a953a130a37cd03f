#include "rxtrain/sweep/sweep.hpp"

#include <algorithm>
#include <atomic>

#include "rxtrain/sweep/thread_pool.hpp"

namespace rxtrain::sweep {

namespace {

// The train options of every run: the views (and so full profiles) only
// when an output column needs them.
TrainOptions run_options(const OutputSpec& outputs, const SweepOptions& options) {
  TrainOptions t = options.train;
  t.equilibrium_views = outputs.needs_equilibrium_views();
  t.solvers.tube.full_profile = outputs.needs_equilibrium_views();
  return t;
}

}  // namespace

bool batched_study(const Case& base, const CasePathTable& table, const OutputSpec& outputs,
                   const SweepOptions& options) {
  return !table.has_stirred_tank() && train_batchable(base, run_options(outputs, options));
}

std::vector<RunRow> run_sweep(const Case& base, const CasePathTable& table, const Study& study,
                              const OutputSpec& outputs, const SweepOptions& options) {
  // Plain copies, not a structured binding: clang 14 (the fuzz build)
  // cannot capture one in a lambda.
  const auto range = options.shard.range(study.run_count());
  const std::size_t first = range.first, last = range.second;
  const std::size_t count = last - first;
  if (count == 0) return {};
  // The chains that hold runs of this shard; the first may begin before
  // `first` (its earlier runs are recomputed, not written).
  const std::size_t chain = study.chain_length();
  const std::size_t first_chain = first / chain;
  const std::size_t chains = (last - 1) / chain + 1 - first_chain;
  const std::size_t jobs = std::min(resolve_jobs(options.jobs), chains);
  const CaseEditor editor(table, study.paths());
  const std::size_t n_inputs = study.paths().size();

  // One working case and workspace per thread, copied once.
  struct Worker {
    Case work;
    PointWorkspace ws;
    std::vector<Case> batch;  // batched studies: one working case per run of a chain
  };
  // Built one by one (not copied from a prototype) so a move-only
  // workspace fits.
  std::vector<Worker> workers;
  workers.reserve(jobs);
  for (std::size_t w = 0; w < jobs; ++w) {
    workers.emplace_back();
    workers.back().work = base;
    workers.back().ws.train = run_options(outputs, options);
  }
  const bool batched = chain > 1 && batched_study(base, table, outputs, options);

  std::vector<RunRow> rows(count);
  std::atomic<std::size_t> done{0};  // runs of this shard finished
  // One run into `row`; evaluate_point passes its steady states on to the
  // worker's next run (or none when it failed).
  const auto run_one = [&](RunRow& row, Worker& wk) {
    row.inputs.assign(n_inputs, 0.0);
    study.inputs(row.run, row.inputs);
    try {
      editor.apply(base, row.inputs, wk.work);
    } catch (const InputError& e) {
      row.result.status = RunStatus::InvalidInput;
      row.result.message = e.message();
      row.result.outputs.assign(outputs.columns().size(), std::nullopt);
      // The working case may be half edited: start the next run afresh.
      wk.work = base;
      wk.ws.train.warm_starts.clear();
      return;
    }
    row.result = evaluate_point(wk.work, outputs, wk.ws);
  };
  // A chain's runs solved together; on a failure of the batch, one by one.
  // The whole chain, also its runs outside this shard (computed, not
  // written): they share the batch, so they shape every run's numbers.
  const std::size_t total = study.run_count();
  const auto run_batch = [&](std::size_t begin, Worker& wk) {
    const std::size_t end = std::min(begin + chain, total);
    std::vector<RunRow> outside(end - begin);
    const auto row_of = [&](std::size_t run) -> RunRow& {
      return run < first || run >= last ? outside[run - begin] : rows[run - first];
    };
    if (wk.batch.size() < end - begin) wk.batch.resize(end - begin, base);
    std::vector<const Case*> cases;
    std::vector<std::size_t> runs;
    for (std::size_t run = begin; run < end; ++run) {
      RunRow& row = row_of(run);
      row.run = run;
      row.inputs.assign(n_inputs, 0.0);
      study.inputs(run, row.inputs);
      Case& work = wk.batch[run - begin];
      try {
        editor.apply(base, row.inputs, work);
      } catch (const InputError& e) {
        row.result.status = RunStatus::InvalidInput;
        row.result.message = e.message();
        row.result.outputs.assign(outputs.columns().size(), std::nullopt);
        work = base;  // may be half edited
        continue;
      }
      cases.push_back(&work);
      runs.push_back(run);
    }
    std::vector<TrainResult> results;
    bool together = true;
    try {
      results = run_trains_batched(cases, wk.ws.train, wk.ws.solver);
    } catch (const InfeasibleError&) {
      together = false;
    } catch (const InputError&) {
      together = false;
    } catch (const SolverError&) {
      together = false;
    }
    for (std::size_t i = 0; i < runs.size(); ++i) {
      RunRow& row = row_of(runs[i]);
      row.result = together ? evaluate_result(results[i], outputs)
                            : evaluate_point(*cases[i], outputs, wk.ws);
    }
    for (std::size_t run = std::max(begin, first); run < std::min(end, last); ++run)
      done.fetch_add(1);
  };
  // A thread takes a whole chain, so each run follows its predecessor.
  parallel_for(
      chains, jobs,
      [&](std::size_t c, std::size_t w) {
        Worker& wk = workers[w];
        wk.ws.train.warm_starts.clear();  // a chain starts cold
        const std::size_t begin = (first_chain + c) * chain;
        if (batched) {
          run_batch(begin, wk);
          return;
        }
        const std::size_t end = std::min(begin + chain, last);
        RunRow before;  // a run of the chain before this shard's first
        for (std::size_t run = begin; run < end; ++run) {
          RunRow& row = run < first ? before : rows[run - first];
          row.run = run;
          run_one(row, wk);
          if (run >= first) done.fetch_add(1);
        }
      },
      options.progress ? [&](std::size_t) { options.progress(done.load(), count); }
                       : std::function<void(std::size_t)>{},
      options.progress_period);
  return rows;
}

}  // namespace rxtrain::sweep
