// Speed benchmark (docs/performance.md): `rxtrain_bench [OPTIONS] [CASE...]`.
//   --seconds S   time budget per measurement (default 1)
//   --runs N      runs of the threaded sweep (default 2000)
//   --only PART   one of startup, cases, views, tolerances, synthetic, threads, sweep,
//                 stability, runaway, fit
// Cases default to cases/*.yaml and tools/bench-cases/*.yaml. Each figure
// is the median of ten batches, each calibrated to about S/10 seconds,
// with the solver's work counts of one run. Plain timed loops; nothing
// here is a pass/fail test.
#include <fmt/format.h>
#include <time.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <new>
#include <string>
#include <thread>
#include <vector>

#include "rxtrain/analysis/stability.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/case/synthetic_case.hpp"
#include "rxtrain/fit/fit.hpp"
#include "rxtrain/fit/lab_data.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/models/equilibrium.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/sweep/study.hpp"
#include "rxtrain/sweep/sweep.hpp"

// Counts the heap allocations of each thread, to report allocations per
// run. A benchmark-only global; the library itself keeps no global state.
// Per thread, not one shared atomic: two sweep threads incrementing one
// counter on every allocation contend for its cache line and slowed the
// two-thread figure by about 10 %.
namespace {
thread_local long g_allocations = 0;
}  // namespace

// GCC 12 inlines these replacements into std::allocator and then takes
// the free() for a mismatch with its builtin operator new
// (-Wmismatched-new-delete): a false positive, since this operator new is
// the malloc() the free() matches.
#pragma GCC diagnostic push
#pragma GCC diagnostic ignored "-Wmismatched-new-delete"
void* operator new(std::size_t size) {
  ++g_allocations;
  if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
  throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }
#pragma GCC diagnostic pop

namespace {

using namespace rxtrain;
using Clock = std::chrono::steady_clock;

double seconds_since(Clock::time_point t0) {
  return std::chrono::duration<double>(Clock::now() - t0).count();
}

double cpu_seconds() {
  timespec ts{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

// Seconds per call: wall-clock time, and the process's CPU time, which
// other work on a shared machine disturbs far less.
struct Timing {
  double wall = 0;
  double cpu = 0;
};

// Medians per call of `f` over ten batches of about budget/10 s each.
Timing median_seconds(const std::function<void()>& f, double budget) {
  long batch = 1;
  for (;;) {
    const auto t0 = Clock::now();
    for (long k = 0; k < batch; ++k) f();
    if (seconds_since(t0) > budget / 10 || batch > (1L << 24)) break;
    batch *= 2;
  }
  std::vector<double> wall, cpu;
  for (int b = 0; b < 10; ++b) {
    const auto t0 = Clock::now();
    const double c0 = cpu_seconds();
    for (long k = 0; k < batch; ++k) f();
    cpu.push_back((cpu_seconds() - c0) / static_cast<double>(batch));
    wall.push_back(seconds_since(t0) / static_cast<double>(batch));
  }
  std::nth_element(wall.begin(), wall.begin() + 5, wall.end());
  std::nth_element(cpu.begin(), cpu.begin() + 5, cpu.end());
  return {wall[5], cpu[5]};
}

struct Work {
  long steps = 0, rhs = 0, jac = 0, roots = 0;
};

Work work_of(const TrainResult& r) {
  Work w;
  for (const auto& s : r.stages) {
    w.steps += s.stats.steps;
    w.rhs += s.stats.rhs_evals;
    w.jac += s.stats.jac_evals;
    w.roots += s.stats.root_evals;
  }
  return w;
}

TrainOptions core_options() {
  TrainOptions o;
  o.equilibrium_views = false;  // the train alone, as a sweep runs it
  o.solvers.tube.full_profile = false;
  return o;
}

std::string load_average() {
  std::ifstream f("/proc/loadavg");
  std::string a, b, c;
  f >> a >> b >> c;
  return f ? a + " " + b + " " + c : "?";
}

void bench_startup(const std::string& file, double budget) {
  fmt::print("\n== start-up: unit database + case parse and validation ({})\n",
             std::filesystem::path(file).filename().string());
  const Timing t_units = median_seconds([] { const UnitParser u; }, budget);
  const UnitParser units;
  const Timing t_load = median_seconds([&] { (void)load_case(file, units); }, budget);
  const Timing t_both = median_seconds(
      [&] {
        const UnitParser u;
        (void)load_case(file, u);
      },
      budget);
  fmt::print(
      "unit database {:.3f} ms, load_case {:.3f} ms, together {:.3f} ms wall "
      "({:.3f} ms CPU)\n",
      t_units.wall * 1e3, t_load.wall * 1e3, t_both.wall * 1e3, t_both.cpu * 1e3);
}

void bench_cases(const std::vector<std::string>& files, double budget) {
  fmt::print(
      "\n== cases: wall time per run (fresh: run_train(c, o); reused: with a "
      "TrainWorkspace; views: as `rxtrain run --json` (every view); table: as `rxtrain run` "
      "printing its table (records and reaches, no curves))\n");
  fmt::print("{:<36} {:>6} {:>6} {:>6} {:>5} {:>6} {:>7} {:>11} {:>11} {:>11} {:>11} {:>11}\n",
             "case", "stages", "steps", "rhs", "jac", "g", "allocs", "fresh", "reused",
             "reused CPU", "views", "table");
  const UnitParser units;
  for (const auto& f : files) {
    const std::string name = std::filesystem::path(f).filename().string();
    try {
      const Case c = load_case(f, units);
      const TrainOptions core = core_options();
      TrainWorkspace ws;
      const TrainResult first = run_train(c, core, ws);
      const Work w = work_of(first);
      // Heap allocations of one reused run, the result's own included.
      const long a0 = g_allocations;
      (void)run_train(c, core, ws);
      const long allocs = g_allocations - a0;
      const Timing t_fresh = median_seconds([&] { (void)run_train(c, core); }, budget);
      const Timing t_reused = median_seconds([&] { (void)run_train(c, core, ws); }, budget);
      const Timing t_views =
          median_seconds([&] { (void)run_train(c, TrainOptions{}, ws); }, budget);
      TrainOptions table_only;  // `rxtrain run` without --json, --csv or --report
      table_only.view_curves = false;
      const Timing t_table = median_seconds([&] { (void)run_train(c, table_only, ws); }, budget);
      fmt::print(
          "{:<36} {:>6} {:>6} {:>6} {:>5} {:>6} {:>7} {:>8.1f} us {:>8.1f} us {:>8.1f} us "
          "{:>8.2f} ms {:>8.2f} ms\n",
          name, first.stages.size(), w.steps, w.rhs, w.jac, w.roots, allocs, t_fresh.wall * 1e6,
          t_reused.wall * 1e6, t_reused.cpu * 1e6, t_views.wall * 1e3, t_table.wall * 1e3);
    } catch (const std::exception& e) {
      fmt::print("{:<36} failed: {}\n", name, e.what());
    }
  }
}

// What `run`'s views add to the train, piece by piece, CPU time per run
// with a reused workspace: the train as `run` computes it (full profiles),
// the table's views (each reactor's equilibrium record and reach), every
// view (as `run --json`), and from those and two direct timings the
// records, the reaches, the Levenspiel curves and the equilibrium curve
// with the maximum-rate locus.
void bench_views(const std::vector<std::string>& files, double budget) {
  fmt::print(
      "\n== run's views, CPU time per run (reused workspace; train: with full profiles, as "
      "`rxtrain run` runs it)\n");
  fmt::print("{:<36} {:>9} {:>9} {:>9} {:>9} {:>9} {:>9} {:>9} {:>7}\n", "case", "train", "table",
             "views", "records", "reaches", "levensp.", "curves", "views/train");
  const UnitParser units;
  for (const auto& f : files) {
    const std::string name = std::filesystem::path(f).filename().string();
    try {
      const Case c = load_case(f, units);
      TrainWorkspace ws;
      TrainOptions train;
      train.equilibrium_views = false;
      TrainOptions table;
      table.view_curves = false;
      const TrainOptions all;
      const TrainResult r = run_train(c, train, ws);
      const Timing t_train = median_seconds([&] { (void)run_train(c, train, ws); }, budget);
      const Timing t_table = median_seconds([&] { (void)run_train(c, table, ws); }, budget);
      const Timing t_all = median_seconds([&] { (void)run_train(c, all, ws); }, budget);
      const Mechanism& mech = c.mechanism;
      const Timing t_lev = median_seconds(
          [&] { (void)levenspiel_curves(mech, c.key, c.feed.F[c.key], r.stages); }, budget);
      // The records as add_equilibrium_views computes them (adiabatic and
      // isothermal reactors with a reversible reaction).
      const Timing t_rec = median_seconds(
          [&] {
            if (!has_reversible_reaction(mech)) return;
            for (const auto& s : r.stages)
              if (is_reactor(s.kind) && s.heat && !s.coolant)
                (void)equilibrium_record(mech, s.inlet, s.outlet, *s.heat,
                                         ConversionBasis{c.key, s.F_key_fed}, {});
          },
          budget);
      const double us = 1e6;
      const double views = t_all.cpu - t_train.cpu;
      fmt::print(
          "{:<36} {:>6.1f} us {:>6.1f} us {:>6.1f} us {:>6.1f} us {:>6.1f} us {:>6.1f} us "
          "{:>6.1f} us {:>9.2f}\n",
          name, t_train.cpu * us, t_table.cpu * us, t_all.cpu * us, t_rec.cpu * us,
          (t_table.cpu - t_train.cpu - t_rec.cpu) * us, t_lev.cpu * us,
          (t_all.cpu - t_table.cpu - t_lev.cpu) * us, views / t_train.cpu);
    } catch (const std::exception& e) {
      fmt::print("{:<36} failed: {}\n", name, e.what());
    }
  }
  fmt::print(
      "(views: the whole `run --json` computation; records and levensp. timed alone; reaches = "
      "table - train - records; curves = views - table - levensp.; views/train = (views - "
      "train) / train)\n");
}

// Cost against accuracy for one case: the overall conversion at each rtol
// against a run at rtol 1e-12.
void bench_tolerances(const std::string& file, double budget) {
  fmt::print("\n== {}: cost against rtol (reused workspace; default rtol 1e-8)\n",
             std::filesystem::path(file).filename().string());
  fmt::print("{:>7} {:>6} {:>6} {:>5} {:>11} {:>11} {:>12}\n", "rtol", "steps", "rhs", "jac",
             "wall/run", "CPU/run", "|X - X_ref|");
  const UnitParser units;
  const Case c = load_case(file, units);
  TrainOptions ref = core_options();
  ref.solvers.tube.cvode.rtol = 1e-12;
  const double X_ref = run_train(c, ref).conversion;
  for (double rtol : {1e-4, 1e-6, 1e-8, 1e-10}) {
    TrainOptions o = core_options();
    o.solvers.tube.cvode.rtol = rtol;
    TrainWorkspace ws;
    const TrainResult r = run_train(c, o, ws);
    const Work w = work_of(r);
    const Timing t = median_seconds([&] { (void)run_train(c, o, ws); }, budget);
    fmt::print("{:>7.0e} {:>6} {:>6} {:>5} {:>8.1f} us {:>8.1f} us {:>12.1e}\n", rtol, w.steps,
               w.rhs, w.jac, t.wall * 1e6, t.cpu * 1e6, std::abs(r.conversion - X_ref));
  }
}

double max_relative_difference(const Stream& a, const Stream& b) {
  double d = std::abs(a.T - b.T) / a.T;
  const double Ft = a.total_flow();
  for (std::size_t i = 0; i < a.F.size(); ++i) d = std::max(d, std::abs(a.F[i] - b.F[i]) / Ft);
  return d;
}

void bench_synthetic(double budget) {
  fmt::print("\n== synthetic mechanisms, one adiabatic tubular stage, reused workspace\n");
  fmt::print("{:>7} {:>9} {:>11} {:>11} {:>11} {:>11} {:>13} {:>9} {:>9}\n", "species", "reactions",
             "dense", "dense CPU", "sparse", "sparse CPU", "steps/jac", "T out K", "max diff");
  // The series of the issue (10/20, 50/100, 200/400) and, to place the
  // automatic dense/sparse switch, a few sizes in between.
  const int sizes[][2] = {{5, 10}, {10, 20}, {20, 40}, {30, 60}, {50, 100}, {100, 200}, {200, 400}};
  double previous = 0;
  int previous_nr = 0;
  for (const auto& sz : sizes) {
    const Case c = synthetic_case(sz[0], sz[1]);
    TrainOptions dense = core_options(), sparse = core_options();
    dense.solvers.tube.jacobian = JacobianForm::Dense;
    sparse.solvers.tube.jacobian = JacobianForm::Sparse;
    TrainWorkspace ws_d, ws_s;
    const TrainResult rd = run_train(c, dense, ws_d);
    const TrainResult rs = run_train(c, sparse, ws_s);
    const Work wd = work_of(rd), wsp = work_of(rs);
    const Timing t_d = median_seconds([&] { (void)run_train(c, dense, ws_d); }, budget);
    const Timing t_s = median_seconds([&] { (void)run_train(c, sparse, ws_s); }, budget);
    fmt::print(
        "{:>7} {:>9} {:>8.3f} ms {:>8.3f} ms {:>8.3f} ms {:>8.3f} ms {:>7}/{:<5} {:>9.2f} "
        "{:>9.1e}\n",
        sz[0], sz[1], t_d.wall * 1e3, t_d.cpu * 1e3, t_s.wall * 1e3, t_s.cpu * 1e3, wsp.steps,
        wsp.jac, rs.outlet.T, max_relative_difference(rd.outlet, rs.outlet));
    if (wd.steps != wsp.steps) fmt::print("        dense took {} steps\n", wd.steps);
    if (previous > 0)
      fmt::print("        sparse CPU time x{:.2f} for reactions x{:.1f}\n", t_s.cpu / previous,
                 static_cast<double>(sz[1]) / previous_nr);
    previous = t_s.cpu;
    previous_nr = sz[1];
  }

  // The same sizes with each species' partners and products at most 10
  // indices above it (bounded coupling, as in a real network), sparse only,
  // on to 800 reactions. The steps differ from mechanism to mechanism, so
  // the cost per step shows the scaling of the linear algebra best.
  fmt::print("\n   fixed window of 10 indices, sparse\n");
  fmt::print("{:>7} {:>9} {:>11} {:>11} {:>7} {:>12} {:>22}\n", "species", "reactions", "sparse",
             "sparse CPU", "steps", "CPU/step", "x per reactions x2");
  const int fixed[][2] = {{25, 50}, {50, 100}, {100, 200}, {200, 400}, {400, 800}};
  double previous_step = 0, previous_run = 0;
  for (const auto& sz : fixed) {
    const Case c = synthetic_case(sz[0], sz[1], 1, 10);
    TrainOptions sparse = core_options();
    sparse.solvers.tube.jacobian = JacobianForm::Sparse;
    TrainWorkspace ws;
    const Work w = work_of(run_train(c, sparse, ws));
    const Timing t = median_seconds([&] { (void)run_train(c, sparse, ws); }, budget);
    const double per_step = t.cpu / static_cast<double>(w.steps);
    const std::string growth = previous_step > 0
                                   ? fmt::format("run x{:.2f}, step x{:.2f}", t.cpu / previous_run,
                                                 per_step / previous_step)
                                   : std::string();
    fmt::print("{:>7} {:>9} {:>8.3f} ms {:>8.3f} ms {:>7} {:>9.2f} us {:>22}\n", sz[0], sz[1],
               t.wall * 1e3, t.cpu * 1e3, w.steps, per_step * 1e6, growth);
    previous_step = per_step;
    previous_run = t.cpu;
  }
}

// `runs` runs of the case split over `threads` threads, one workspace each.
Timing sweep_seconds(const Case& c, int runs, int threads) {
  const TrainOptions o = core_options();
  const auto t0 = Clock::now();
  const double c0 = cpu_seconds();
  std::vector<std::thread> pool;
  for (int t = 0; t < threads; ++t) {
    const int share = runs / threads + (t < runs % threads ? 1 : 0);
    pool.emplace_back([&c, &o, share] {
      TrainWorkspace ws;
      for (int k = 0; k < share; ++k) (void)run_train(c, o, ws);
    });
  }
  for (auto& th : pool) th.join();
  return {seconds_since(t0), cpu_seconds() - c0};
}

void bench_threads(const std::string& file, int runs) {
  fmt::print(
      "\n== in-process sweep: {} runs of {}, one TrainWorkspace per thread "
      "(best of 3)\n",
      runs, std::filesystem::path(file).filename().string());
  const UnitParser units;
  const Case c = load_case(file, units);
  Timing t1{1e300, 1e300}, t2{1e300, 1e300};
  for (int rep = 0; rep < 3; ++rep) {
    const Timing a = sweep_seconds(c, runs, 1), b = sweep_seconds(c, runs, 2);
    if (a.wall < t1.wall) t1 = a;
    if (b.wall < t2.wall) t2 = b;
  }
  // CPU per run that stays put from 1 to 2 threads means the threads do not
  // get in each other's way; the wall-clock speed-up then only depends on
  // how much of the second core the machine has free.
  fmt::print("1 thread:  {:.3f} s wall ({:.0f} runs/s), {:.1f} us CPU per run\n", t1.wall,
             runs / t1.wall, t1.cpu / runs * 1e6);
  fmt::print("2 threads: {:.3f} s wall ({:.0f} runs/s), {:.1f} us CPU per run\n", t2.wall,
             runs / t2.wall, t2.cpu / runs * 1e6);
  fmt::print("speed-up 1 -> 2 threads: {:.2f}x\n", t1.wall / t2.wall);
}

// The sweep library as `rxtrain sweep` runs it (case editing, output
// columns; no start-up, no CSV): a feed.T grid, each run alone (chains of
// one) and in batches of kBatchRuns, on 1 and 2 threads. For the reference
// case and for the two-reaction bench case, whose beds are watched for a
// temperature turning inside them.
void bench_sweep(const std::string& file, const std::string& range, int runs) {
  using namespace rxtrain::sweep;
  fmt::print("\n== sweep library: feed.T = {}, {} runs of {} (best of 3)\n", range, runs,
             std::filesystem::path(file).filename().string());
  const UnitParser units;
  const Case c = load_case(file, units);
  const CasePathTable table(c);
  Study s = parse_study({fmt::format("feed.T={}:{}", range, runs)}, {}, 0, 1, table, units);
  const OutputSpec o = OutputSpec::defaults(c);
  fmt::print("{:>10} {:>7} {:>10} {:>10} {:>14}\n", "solved", "threads", "wall s", "runs/s",
             "CPU us/run");
  for (const std::size_t chain : {std::size_t{1}, kBatchRuns}) {
    s.chain = chain;
    for (const std::size_t jobs : {1, 2}) {
      Timing best{1e300, 1e300};
      for (int rep = 0; rep < 3; ++rep) {
        SweepOptions opt;
        opt.jobs = jobs;
        const auto t0 = Clock::now();
        const double c0 = cpu_seconds();
        (void)run_sweep(c, table, s, o, opt);
        const Timing t{seconds_since(t0), cpu_seconds() - c0};
        if (t.wall < best.wall) best = t;
      }
      fmt::print("{:>10} {:>7} {:>10.3f} {:>10.0f} {:>14.1f}\n",
                 chain == 1 ? "alone" : fmt::format("batch {}", chain), jobs, best.wall,
                 runs / best.wall, best.cpu / runs * 1e6);
    }
  }
}

// `rxtrain stability` on the demo tank: the S-curve in the feed
// temperature, the step bound set so that the continuation takes about 200
// points (issue 20's benchmark: under 50 ms).
void bench_stability(const std::string& file, double budget) {
  const UnitParser units;
  const Case c = load_case(file, units);
  CaseField feed_T;
  for (const auto& f : case_fields(c))
    if (f.name == "feed.T") feed_T = f;
  StabilityOptions o;
  o.lo = 240.0;
  o.hi = 320.0;
  o.continuation.ds_max = 0.0133;
  const StabilityResult r = run_stability(c, feed_T, o);
  const Timing t = median_seconds([&] { (void)run_stability(c, feed_T, o); }, budget);
  fmt::print("\nstability: {}, feed.T 240 K to 320 K\n",
             std::filesystem::path(file).filename().string());
  fmt::print("{:>8} {:>8} {:>12} {:>10} {:>10}\n", "points", "folds", "corrector it", "wall ms",
             "CPU ms");
  fmt::print("{:>8} {:>8} {:>12} {:>10.2f} {:>10.2f}\n", r.points, r.turning_points.size(),
             r.corrector_iterations, t.wall * 1e3, t.cpu * 1e3);
}

// The demo fit: 4 parameters (A and Ea of both reactions) to 40 lab runs
// of two measured outputs, on every hardware thread, from the case's
// first guesses.
void bench_fit(const std::filesystem::path& root) {
  const UnitParser units;
  const Case lab = load_case((root / "cases/selective-hydrogenation-lab.yaml").string(), units);
  const sweep::CasePathTable table(lab);
  std::ifstream in(root / "cases/selective-hydrogenation-lab-runs.csv");
  const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  const fit::LabData data = fit::read_lab_data(text, "runs.csv", lab, table, units);
  fit::FitOptions o;
  for (const char* p : {"reactions.semi.rate.A", "reactions.semi.rate.Ea", "reactions.over.rate.A",
                        "reactions.over.rate.Ea"})
    o.free.push_back({table.find(p, "bench"), {}, {}});
  fit::FitResult r;
  const Timing t = median_seconds([&] { r = fit::run_fit(lab, table, data, o); }, 3.0);
  fmt::print("\nfit: selective-hydrogenation-lab, {} parameters, {} runs x {} outputs\n",
             o.free.size(), data.runs(), data.outputs.columns().size());
  fmt::print("{:>10} {:>10} {:>10} {:>10}\n", "iterations", "converged", "wall s", "CPU s");
  fmt::print("{:>10} {:>10} {:>10.3f} {:>10.3f}\n", r.iterations, r.converged ? "yes" : "no",
             t.wall, t.cpu);
}

// `rxtrain stability` on the cooled demo bed: a 100-point sensitivity scan
// of its coolant temperature (issue 20's benchmark: under 1 s); and what
// `run`'s runaway check (--runaway-margin, default 5 K) adds to run_checked
// on each cooled demo bed.
void bench_runaway(const std::filesystem::path& root, double budget) {
  const UnitParser units;
  const Case c = load_case((root / "cases/cooled-bed-runaway.yaml").string(), units);
  CaseField coolant_T;
  for (const auto& f : case_fields(c))
    if (f.name == "train.R1.heat.coolant.T") coolant_T = f;
  StabilityOptions o;
  o.lo = 653.15;
  o.hi = 693.15;
  o.sensitivity.points = 100;
  const StabilityResult r = run_stability(c, coolant_T, o);
  const Timing t = median_seconds([&] { (void)run_stability(c, coolant_T, o); }, budget);
  fmt::print("\nrunaway: cooled-bed-runaway.yaml, train.R1.heat.coolant.T 380 °C to 420 °C\n");
  fmt::print("{:>8} {:>8} {:>12} {:>10} {:>10}\n", "points", "runs", "critical K", "wall ms",
             "CPU ms");
  fmt::print("{:>8} {:>8} {:>12.3f} {:>10.2f} {:>10.2f}\n", r.sensitivity.size(), r.runs,
             r.critical ? r.critical->value : 0.0, t.wall * 1e3, t.cpu * 1e3);
  fmt::print("\nrun's runaway check (run_checked, table only)\n");
  fmt::print("{:<32} {:>14} {:>14}\n", "case", "margin 0 CPU ms", "margin 5 K CPU ms");
  for (const char* name : {"cooled-bed-runaway.yaml", "so2-cooled-multitubular.yaml",
                           "so2-three-bed-converter.yaml"}) {
    const Case k = load_case((root / "cases" / name).string(), units);
    TrainOptions table;
    table.view_curves = false;
    const Timing off = median_seconds([&] { (void)run_checked(k, table, 0.0, 0.0); }, budget);
    const Timing on = median_seconds([&] { (void)run_checked(k, table, 0.0, 5.0); }, budget);
    fmt::print("{:<32} {:>14.2f} {:>14.2f}\n", name, off.cpu * 1e3, on.cpu * 1e3);
  }
}

}  // namespace

int main(int argc, char** argv) {
  std::vector<std::string> files;
  double budget = 1.0;
  int runs = 2000;
  std::string only;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--seconds" && i + 1 < argc) {
      budget = std::stod(argv[++i]);
    } else if (a == "--runs" && i + 1 < argc) {
      runs = std::stoi(argv[++i]);
    } else if (a == "--only" && i + 1 < argc) {
      only = argv[++i];
    } else {
      files.push_back(a);
    }
  }
  const std::filesystem::path root(RXTRAIN_SOURCE_DIR);
  if (files.empty()) {
    for (const auto* dir : {"cases", "tools/bench-cases"}) {
      std::vector<std::string> found;
      for (const auto& e : std::filesystem::directory_iterator(root / dir))
        if (e.path().extension() == ".yaml") found.push_back(e.path().string());
      std::sort(found.begin(), found.end());
      files.insert(files.end(), found.begin(), found.end());
    }
  }
  const std::string reference = (root / "cases/so2-three-bed-converter.yaml").string();
  fmt::print("rxtrain_bench: {} hardware threads, load average {} at start\n",
             std::thread::hardware_concurrency(), load_average());
  if (only.empty() || only == "startup") bench_startup(reference, budget);
  if (only.empty() || only == "cases") bench_cases(files, budget);
  if (only.empty() || only == "views") bench_views(files, budget);
  if (only.empty() || only == "tolerances") bench_tolerances(reference, budget);
  if (only.empty() || only == "synthetic") bench_synthetic(budget);
  if (only.empty() || only == "threads") bench_threads(reference, runs);
  if (only.empty() || only == "stability")
    bench_stability((root / "cases/isomerization-tank-three-states.yaml").string(), budget);
  if (only.empty() || only == "fit") bench_fit(root);
  if (only.empty() || only == "runaway") bench_runaway(root, budget);
  if (only.empty() || only == "sweep") {
    bench_sweep(reference, "400degC:440degC", runs);
    bench_sweep((root / "tools/bench-cases/five-species-two-step.yaml").string(), "40degC:60degC",
                runs);
  }
  fmt::print("\nload average {} at end\n", load_average());
  return 0;
}
