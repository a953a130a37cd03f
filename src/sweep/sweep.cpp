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
  t.view_curves = false;  // a row holds numbers of the stages, never a curve
  return t;
}

}  // namespace

bool batched_study(const Case& base, const CasePathTable& table, const OutputSpec& outputs,
                   const SweepOptions& options) {
  return !table.has_stirred_tank() && train_batchable(base, run_options(outputs, options));
}

namespace {

// One working case and workspace per thread, copied once.
struct Worker {
  Case work;
  PointWorkspace ws;
  std::vector<Case> batch;  // batched studies: one working case per run of a chain
};

// The runs of one shard of a study, chain by chain (a chain is a thread's
// unit of work, so each run follows its predecessor).
class ShardRuns {
 public:
  ShardRuns(const Case& base, const CasePathTable& table, const Study& study,
            const OutputSpec& outputs, std::size_t first, std::size_t last)
      : base_(base),
        study_(study),
        outputs_(outputs),
        editor_(table, study.paths()),
        n_inputs_(study.paths().size()),
        first_(first),
        last_(last),
        rows_(last - first) {}

  // The chain that starts at run `begin`, by one of the two ways.
  void run_chain(std::size_t begin, std::size_t chain, bool batched, Worker& wk) {
    wk.ws.train.warm_starts.clear();  // a chain starts cold
    if (batched) {
      run_batch(begin, chain, wk);
      return;
    }
    const std::size_t end = std::min(begin + chain, last_);
    RunRow before;  // a run of the chain before this shard's first
    for (std::size_t run = begin; run < end; ++run) {
      RunRow& row = run < first_ ? before : rows_[run - first_];
      row.run = run;
      if (apply_inputs(row, wk.work)) {
        row.result = evaluate_point(wk.work, outputs_, wk.ws);
      } else {
        wk.ws.train.warm_starts.clear();  // the next run starts afresh too
      }
      if (run >= first_) done_.fetch_add(1);
    }
  }

  std::size_t done() const { return done_.load(); }
  std::vector<RunRow> take_rows() { return std::move(rows_); }

 private:
  // The run's inputs into `work`; false (the row says why, `work` is reset
  // to the base case, which it may be half edited from) when the case
  // refuses them.
  bool apply_inputs(RunRow& row, Case& work) const {
    row.inputs.assign(n_inputs_, 0.0);
    study_.inputs(row.run, row.inputs);
    try {
      editor_.apply(base_, row.inputs, work);
      return true;
    } catch (const InputError& e) {
      row.result.status = RunStatus::InvalidInput;
      row.result.message = e.message();
      row.result.outputs.assign(outputs_.columns().size(), std::nullopt);
      work = base_;
      return false;
    }
  }

  // A chain's runs solved together; on a failure of the batch, one by
  // one (evaluate_point passes steady states on within the worker). The
  // whole chain, also its runs outside this shard (computed, not written):
  // they share the batch, so they shape every run's numbers.
  void run_batch(std::size_t begin, std::size_t chain, Worker& wk) {
    const std::size_t end = std::min(begin + chain, study_.run_count());
    std::vector<RunRow> outside(end - begin);
    const auto row_of = [&](std::size_t run) -> RunRow& {
      return run < first_ || run >= last_ ? outside[run - begin] : rows_[run - first_];
    };
    if (wk.batch.size() < end - begin) wk.batch.resize(end - begin, base_);
    std::vector<const Case*> cases;
    std::vector<std::size_t> runs;
    for (std::size_t run = begin; run < end; ++run) {
      RunRow& row = row_of(run);
      row.run = run;
      Case& work = wk.batch[run - begin];
      if (!apply_inputs(row, work)) continue;
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
      row.result = together ? evaluate_result(results[i], outputs_)
                            : evaluate_point(*cases[i], outputs_, wk.ws);
    }
    for (std::size_t run = std::max(begin, first_); run < std::min(end, last_); ++run)
      done_.fetch_add(1);
  }

  const Case& base_;
  const Study& study_;
  const OutputSpec& outputs_;
  const CaseEditor editor_;
  const std::size_t n_inputs_;
  const std::size_t first_, last_;
  std::vector<RunRow> rows_;
  std::atomic<std::size_t> done_{0};  // runs of this shard finished
};

}  // namespace

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

  ShardRuns shard(base, table, study, outputs, first, last);
  parallel_for(
      chains, jobs,
      [&](std::size_t c, std::size_t w) {
        shard.run_chain((first_chain + c) * chain, chain, batched, workers[w]);
      },
      options.progress || options.cancel
          ? [&](std::size_t) {
              if (options.progress) options.progress(shard.done(), count);
              if (options.cancel && options.cancel()) throw SweepCancelled();
            }
          : std::function<void(std::size_t)>{},
      options.progress_period);
  return shard.take_rows();
}

}  // namespace rxtrain::sweep
