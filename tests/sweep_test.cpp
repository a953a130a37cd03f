// Sweeps and Monte Carlo studies: case paths, run order, sampling,
// percentiles, shards and merge, and sweep rows against analytic reactor
// solutions.
#include "rxtrain/sweep/sweep.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <functional>
#include <sstream>
#include <string>
#include <variant>

#include "input_error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/sweep/percentiles.hpp"
#include "rxtrain/sweep/sampling.hpp"
#include "rxtrain/sweep/study.hpp"
#include "rxtrain/sweep/summary.hpp"
#include "rxtrain/sweep/sweep_csv.hpp"
#include "s_curve_tank.hpp"
#include "sized_tube.hpp"

using namespace rxtrain;
using namespace rxtrain::sweep;

namespace {

// A liquid, isothermal, first-order A => B tube (invented data): v0 =
// F_A mw / rho = 1e-4 m3/s, so tau = V / v0 and X = 1 - exp(-k tau).
constexpr const char* kFirstOrder = R"(title: first-order tube (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3}
reactions:
  - id: r1
    equation: A => B
    rate: {A: 1e-3, Ea: 0}
    dH: 0
feed: {T: 300 K, P: 1 bar, flows: {A: 1 mol/s}}
key: A
train:
  - {type: pfr, id: R1, volume: 0.1 m3, heat: isothermal}
)";
constexpr double kV0 = 1e-4;  // m3/s

std::string demo_text() {
  std::ifstream in(std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases" /
                   "isomerization-two-bed.yaml");
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

using rxtrain::test::input_error;

struct Fixture {
  UnitParser units;
  Case c;
  CasePathTable table;
  Fixture(const std::string& text) : c(load_case_from_string(text, "t.yaml", units)), table(c) {}
  Study study(std::vector<std::string> vary, std::vector<std::string> sample = {},
              std::size_t runs = 0, std::uint64_t seed = 1) const {
    return parse_study(vary, sample, runs, seed, table, units);
  }
};

std::vector<RunRow> run(const Fixture& f, const Study& s, const OutputSpec& o, std::size_t jobs = 1,
                        Shard shard = {}) {
  SweepOptions opt;
  opt.jobs = jobs;
  opt.shard = shard;
  return run_sweep(f.c, f.table, s, o, opt);
}

}  // namespace

TEST_CASE("percentiles interpolate between order statistics (Hyndman-Fan type 7)", "[sweep]") {
  // Hyndman & Fan (1996), definition 7: h = (n-1) p, Q = x[h] + frac(h) (x[h+1] - x[h]);
  // values computed by hand.
  const auto s = summarize({4, 1, 3, 2});
  REQUIRE(s);
  CHECK(s->n == 4);
  CHECK(s->p5 == Approx(1.15).epsilon(1e-15));   // h = 0.15
  CHECK(s->p50 == Approx(2.5).epsilon(1e-15));   // h = 1.5
  CHECK(s->p95 == Approx(3.85).epsilon(1e-15));  // h = 2.85
  const auto t = summarize({50, 10, 40, 20, 30});
  CHECK(t->p5 == Approx(12.0).epsilon(1e-15));   // h = 0.2
  CHECK(t->p50 == 30.0);                         // h = 2
  CHECK(t->p95 == Approx(48.0).epsilon(1e-15));  // h = 3.8
  const auto one = summarize({7});
  CHECK((one->p5 == 7 && one->p50 == 7 && one->p95 == 7));
  CHECK_FALSE(summarize({}));
}

TEST_CASE("sampled inputs have the moments of their distributions", "[sweep]") {
  // Tolerance: 5 standard errors of the estimate (SE of a mean sigma/sqrt(N);
  // large-sample SE of the SD of normal values sigma/sqrt(2(N-1))). The draws
  // are fixed by the seed, so the test is deterministic.
  constexpr std::size_t N = 20000;
  const auto moments = [&](const Distribution& d, bool log) {
    double sum = 0, sum2 = 0;
    for (std::size_t r = 0; r < N; ++r) {
      const double x = log ? std::log(d.sample(42, r, 3)) : d.sample(42, r, 3);
      sum += x;
      sum2 += x * x;
    }
    const double mean = sum / N;
    return std::pair{mean, std::sqrt((sum2 - N * mean * mean) / (N - 1))};
  };
  const double se_mean = 1 / std::sqrt(double(N)), se_sd = 1 / std::sqrt(2.0 * (N - 1));
  {
    const auto [m, sd] = moments({Distribution::Kind::Normal, 10, 2}, false);
    CHECK(std::abs(m - 10) < 5 * 2 * se_mean);
    CHECK(std::abs(sd - 2) < 5 * 2 * se_sd);
  }
  {
    // Uniform(2, 5): mean 3.5, SD 3/sqrt(12).
    const double sigma = 3 / std::sqrt(12.0);
    const auto [m, sd] = moments({Distribution::Kind::Uniform, 2, 5}, false);
    CHECK(std::abs(m - 3.5) < 5 * sigma * se_mean);
    // SE of an SD for any distribution with kurtosis kappa: sigma sqrt((kappa - 1) / (4 N))
    // (delta method, large samples; from memory); kappa = 9/5 for a uniform.
    CHECK(std::abs(sd - sigma) < 5 * sigma * std::sqrt((1.8 - 1) / (4.0 * N)));
  }
  {
    // Lognormal(median 3, sigma 0.5): ln X is normal(ln 3, 0.5).
    const auto [m, sd] = moments({Distribution::Kind::LogNormal, 3, 0.5}, true);
    CHECK(std::abs(m - std::log(3.0)) < 5 * 0.5 * se_mean);
    CHECK(std::abs(sd - 0.5) < 5 * 0.5 * se_sd);
  }
}

TEST_CASE("draws depend only on seed, run and input", "[sweep]") {
  CHECK(uniform01(1, 5, 0, 0) == uniform01(1, 5, 0, 0));
  CHECK(uniform01(1, 5, 0, 0) != uniform01(2, 5, 0, 0));
  CHECK(uniform01(1, 5, 0, 0) != uniform01(1, 6, 0, 0));
  CHECK(uniform01(1, 5, 0, 0) != uniform01(1, 5, 1, 0));
  for (std::uint64_t r = 0; r < 1000; ++r) {
    const double u = uniform01(9, r, 0, 1);
    CHECK((u > 0 && u < 1));
  }
  // SplitMix64 reference output: the first value of a generator seeded with 0
  // is mix64(0) = 0xE220A8397B1DCDAF (Vigna's splitmix64.c, from memory).
  CHECK(mix64(0) == 0xE220A8397B1DCDAFULL);
}

TEST_CASE("a grid runs row-major, the last --vary fastest, ends exact", "[sweep]") {
  const Fixture f(kFirstOrder);
  const Study s = f.study({"feed.T=300K:310K:3", "log:train.R1.volume=0.01m3:1m3:3"});
  REQUIRE(s.run_count() == 9);
  std::vector<double> in(2);
  s.inputs(0, in);
  CHECK((in[0] == 300 && in[1] == 0.01));
  s.inputs(1, in);
  CHECK((in[0] == 300 && in[1] == Approx(0.1).epsilon(1e-14)));
  s.inputs(2, in);
  CHECK((in[0] == 300 && in[1] == 1.0));
  s.inputs(3, in);
  CHECK((in[0] == 305 && in[1] == 0.01));
  s.inputs(8, in);
  CHECK((in[0] == 310 && in[1] == 1.0));
  // degC converts with its offset; the other spelling of log is accepted.
  const Study t = f.study({"feed.T=26.85degC:36.85degC:2"});
  t.inputs(0, in);
  CHECK(in[0] == Approx(300.0).epsilon(1e-15));
  CHECK(f.study({"train.R1.volume=log:1m3:100m3:3"}).axes[0].value(1) ==
        Approx(10.0).epsilon(1e-14));
}

TEST_CASE("bad study definitions are input errors naming the option", "[sweep]") {
  const Fixture f(kFirstOrder);
  auto e = input_error([&] { f.study({"feed.Temp=300K:310K:3"}); });
  CHECK(e.find("--vary") == 0);
  CHECK(e.find("unknown case path \"feed.Temp\"; did you mean \"feed.T\"?") != std::string::npos);
  e = input_error([&] { f.study({"feed.T=1bar:2bar:3"}); });
  CHECK(e.find("K") != std::string::npos);
  CHECK(e.find("bar") != std::string::npos);
  e = input_error([&] { f.study({"feed.P=-1bar:2bar:3"}); });
  CHECK(e.find("out of range") != std::string::npos);
  e = input_error([&] { f.study({"feed.T=300K:310K"}); });
  CHECK(e.find("START:STOP:N") != std::string::npos);
  e = input_error([&] { f.study({"feed.T=300K:310K:3", "feed.T=1K:2K:2"}); });
  CHECK(e.find("given twice") != std::string::npos);
  e = input_error([&] { f.study({}, {"feed.T=gauss(300K,5K)"}, 10); });
  CHECK(e.find("unknown distribution") != std::string::npos);
  e = input_error([&] { f.study({}, {"feed.T=normal(300K,5K)"}, 0); });
  CHECK(e.find("--runs") == 0);
  e = input_error([&] { f.study({"feed.T=300K:310K:3"}, {"feed.P=normal(1bar,0.1bar)"}, 10); });
  CHECK(e.find("cannot be combined") != std::string::npos);
  e = input_error([&] { OutputSpec::parse("X,R9.T_peak", f.c); });
  CHECK(e.find("--output") == 0);
  e = input_error([&] { OutputSpec::parse("R1.Tpeak", f.c); });
  CHECK(e.find("did you mean \"R1.T_peak\"") != std::string::npos);
  e = input_error([&] { OutputSpec::parse("X,R1.T_max", f.c); });
  CHECK(e.find("is now \"R1.T_peak\"") != std::string::npos);
  e = input_error([&] { Shard::parse("5/4"); });
  CHECK(e.find("--shard") == 0);
}

TEST_CASE("an SD in degC is a temperature difference", "[sweep]") {
  const Fixture f(kFirstOrder);
  const Study s = f.study({}, {"feed.T=normal(30degC,5degC)"}, 10);
  CHECK(s.samples[0].dist.a == Approx(303.15).epsilon(1e-15));
  CHECK(s.samples[0].dist.b == Approx(5.0).epsilon(1e-14));
}

TEST_CASE("the case editor writes fields the way the loader reads them", "[sweep]") {
  const Fixture f(demo_text());
  const Case& base = f.c;
  const std::vector<std::size_t> which{
      f.table.find("feed.flow", "t"), f.table.find("feed.composition.H2", "t"),
      f.table.find("train.R1.catalyst", "t"), f.table.find("train.R1.bulk_density", "t"),
      f.table.find("reactions.isom.rate.A", "t")};
  const CaseEditor editor(f.table, which);
  Case work = base;
  const std::vector<double> v{20.0, 0.5, 3000.0, 600.0, 2e-9};
  editor.apply(base, v, work);
  CHECK(work.feed.total_flow() == Approx(20.0).epsilon(1e-14));
  CHECK(work.feed.F[2] / work.feed.total_flow() == Approx(0.5).epsilon(1e-14));
  // NC5 : IC5 keep their ratio 0.38 : 0.02.
  CHECK(work.feed.F[0] / work.feed.F[1] == Approx(19.0).epsilon(1e-12));
  const auto& r1 = std::get<ReactorSpec>(work.train[0]);
  CHECK(*r1.volume == Approx(3000.0 / 600.0).epsilon(1e-15));
  // With T_ref, k(T_ref) = A (Arrhenius form of docs/case-format.md).
  CHECK(work.mechanism.rate_constant(0, 450.0) == Approx(2e-9).epsilon(1e-14));
  CHECK(base.mechanism.rate_constant(0, 450.0) == Approx(6e-9).epsilon(1e-14));
  // Reapplied values replace, never accumulate.
  editor.apply(base, v, work);
  CHECK(work.feed.total_flow() == Approx(20.0).epsilon(1e-14));
  // Out of range: an InputError, the row's reason.
  const std::vector<double> bad{-1.0, 0.5, 3000.0, 600.0, 2e-9};
  CHECK(input_error([&] { editor.apply(base, bad, work); }).find("feed.flow") != std::string::npos);
}

TEST_CASE("a sweep point equals the run of the case written with that value", "[sweep]") {
  const Fixture f(demo_text());
  const Study s = f.study({"feed.T=140degC:160degC:3"});
  const OutputSpec o = OutputSpec::parse("X,T_out,R1.T_peak,R2.outlet.T,E1.duty", f.c);
  const auto rows = run(f, s, o);
  REQUIRE(rows.size() == 3);
  std::string text = demo_text();
  text.replace(text.find("T: 150 degC"), 11, "T: 140 degC");
  const Case c140 = load_case_from_string(text, "t.yaml", f.units);
  TrainOptions opt;
  opt.equilibrium_views = false;
  for (const auto& [row, c] : {std::pair{0, &c140}, std::pair{1, &f.c}}) {
    const TrainResult r = run_train(*c, opt);
    REQUIRE(rows[row].result.status == RunStatus::Ok);
    CHECK(*rows[row].result.outputs[0] == r.conversion);
    CHECK(*rows[row].result.outputs[1] == r.outlet.T);
    CHECK(*rows[row].result.outputs[2] == r.stages[0].T_max);
    CHECK(*rows[row].result.outputs[3] == r.stages[2].outlet.T);
    CHECK(*rows[row].result.outputs[4] == r.stages[1].duty);
  }
}

TEST_CASE("rows and CSV are identical for any number of jobs and shards", "[sweep]") {
  const Fixture f(kFirstOrder);
  const Study s =
      f.study({}, {"reactions.r1.rate.A=lognormal(1e-3,0.3)", "feed.T=normal(300K,2K)"}, 37, 11);
  const OutputSpec o = OutputSpec::defaults(f.c);
  const StudyHeader h{"test", "abc", s.definition(), o.names()};
  const auto names = s.input_names();
  const std::string serial = sweep_csv(h, {}, names, run(f, s, o, 1));
  CHECK(sweep_csv(h, {}, names, run(f, s, o, 2)) == serial);
  CHECK(sweep_csv(h, {}, names, run(f, s, o, 3)) == serial);
  std::vector<std::pair<std::string, std::string>> shards;
  for (std::size_t k : {3, 1, 4, 2})  // any order
    shards.emplace_back(fmt::format("s{}.csv", k),
                        sweep_csv(h, {k, 4}, names, run(f, s, o, 2, {k, 4})));
  const MergeResult m = merge_sweep_csv(shards);
  CHECK(m.csv == serial);
  CHECK(m.runs == 37);
  CHECK(m.statuses.at("ok") == 37);

  SECTION("merge refuses a missing, repeated or foreign shard") {
    auto missing = shards;
    missing.pop_back();
    CHECK(input_error([&] { merge_sweep_csv(missing); }).find("missing shard 2/4") !=
          std::string::npos);
    auto repeated = shards;
    repeated.back() = repeated.front();
    repeated.back().first = "again.csv";
    CHECK(input_error([&] { merge_sweep_csv(repeated); }).find("repeats shard 3/4") !=
          std::string::npos);
    const Study other =
        f.study({}, {"reactions.r1.rate.A=lognormal(1e-3,0.3)", "feed.T=normal(300K,2K)"}, 37, 12);
    const StudyHeader h2{"test", "abc", other.definition(), o.names()};
    auto foreign = shards;
    foreign[1].second = sweep_csv(h2, {1, 4}, names, run(f, other, o, 1, {1, 4}));
    const auto e = input_error([&] { merge_sweep_csv(foreign); });
    CHECK(e.find("s1.csv") == 0);
    CHECK(e.find("another study") != std::string::npos);
    CHECK(e.find("seed: 11") != std::string::npos);
    auto truncated = shards;
    truncated[0].second.erase(truncated[0].second.rfind('\n', truncated[0].second.size() - 2) + 1);
    CHECK(input_error([&] { merge_sweep_csv(truncated); }).find("incomplete") != std::string::npos);
  }
}

TEST_CASE("warm-started stirred tanks give the same rows for any jobs and shards", "[sweep]") {
  const Fixture f(test::kSCurveTank);
  // 40 runs: chains [0, 16), [16, 32), [32, 40); shards of 3 and 7 begin
  // inside chains, so they must recompute the chains' earlier runs.
  const Study s = f.study({"train.R1.volume=log:1e-4:1e-2:40"});
  REQUIRE(s.chain_length() == kGridChainLength);
  // Nothing to warm-start without a tank, no neighbours in Monte Carlo.
  CHECK(Fixture(kFirstOrder).study({"train.R1.volume=0.1:0.2:40"}).chain_length() == 1);
  CHECK(f.study({}, {"train.R1.volume=uniform(1e-4,1e-2)"}, 40).chain_length() == 1);
  const OutputSpec o = OutputSpec::defaults(f.c);
  const StudyHeader h{"test", "abc", s.definition(), o.names()};
  const auto names = s.input_names();
  const std::vector<RunRow> serial_rows = run(f, s, o, 1);
  const std::string serial = sweep_csv(h, {}, names, serial_rows);
  CHECK(serial.find("# chain: 16\n") != std::string::npos);
  CHECK(sweep_csv(h, {}, names, run(f, s, o, 2)) == serial);
  CHECK(sweep_csv(h, {}, names, run(f, s, o, 3)) == serial);
  for (std::size_t n : {3, 7}) {
    std::vector<std::pair<std::string, std::string>> shards;
    for (std::size_t k = 1; k <= n; ++k)
      shards.emplace_back(fmt::format("s{}.csv", k),
                          sweep_csv(h, {k, n}, names, run(f, s, o, 2, {k, n})));
    CHECK(merge_sweep_csv(shards).csv == serial);
  }

  // Each row is the run warm-started from its predecessor in the chain
  // (the chain's first run cold), exactly.
  TrainOptions opt;
  opt.equilibrium_views = false;
  TrainWorkspace ws;
  Case work = f.c;
  const CaseEditor editor(f.table, s.paths());
  std::size_t several = 0;
  for (std::size_t run_index = 0; run_index < s.run_count(); ++run_index) {
    INFO("run " << run_index);
    if (run_index % s.chain_length() == 0) opt.warm_starts.clear();
    std::vector<double> in(names.size());
    s.inputs(run_index, in);
    editor.apply(f.c, in, work);
    const TrainResult r = run_train(work, opt, ws);
    const RunRow& row = serial_rows[run_index];
    REQUIRE(row.result.status == RunStatus::Ok);
    for (std::size_t i = 0; i < o.columns().size(); ++i)
      CHECK(row.result.outputs[i] == o.extract(i, r));
    if (r.stages[0].steady_states.size() > 1) ++several;
    set_warm_starts(r, opt.warm_starts);
    REQUIRE(opt.warm_starts.size() == 1);
    CHECK(opt.warm_starts[0].stage == "R1");
  }
  CHECK(several > 10);  // the chains do cross the region of three states
}

TEST_CASE("an ok row carries a tank's several steady states in its message", "[sweep]") {
  // tests/s_curve_tank.hpp: at tau = 1 s the tank has three steady states
  // (checked against GSL in tests/cstr_test.cpp); `run` warns of them, and
  // so must the sweep's row.
  const Fixture tank(test::kSCurveTank);
  PointWorkspace ws;
  ws.train.equilibrium_views = false;
  const PointResult p = evaluate_point(tank.c, OutputSpec::defaults(tank.c), ws);
  REQUIRE(p.status == RunStatus::Ok);
  CHECK_THAT(p.message, Catch::Contains("stage R1: 3 steady states found"));
  // The same words as the run's own warning.
  const TrainResult r = run_train(tank.c);
  REQUIRE(r.stages[0].warnings.size() == 1);
  CHECK(p.message == r.stages[0].warnings[0]);
  // A run with nothing to tell (the isothermal first-order tube) leaves
  // the message empty.
  const Fixture tube(kFirstOrder);
  PointWorkspace wt;
  CHECK(evaluate_point(tube.c, OutputSpec::defaults(tube.c), wt).message.empty());
}

TEST_CASE("a run passes its tanks' steady states on, a failed run passes none", "[sweep]") {
  const Fixture tank(test::kSCurveTank);
  PointWorkspace ws;
  ws.train.equilibrium_views = false;
  const OutputSpec o = OutputSpec::defaults(tank.c);
  REQUIRE(evaluate_point(tank.c, o, ws).status == RunStatus::Ok);
  REQUIRE(ws.train.warm_starts.size() == 1);
  CHECK(ws.train.warm_starts[0].stage == "R1");
  CHECK(ws.train.warm_starts[0].states.size() == 3);  // tau = 1 s: three states
  // Beyond equilibrium (X_eq = 0.5): infeasible, and nothing passed on.
  const Fixture tube(test::kSizedTube);
  CaseEditor editor(tube.table, tube.study({"train.R1.target.conversion=0.6:0.6:1"}).paths());
  Case beyond = tube.c;
  const std::vector<double> X{0.6};
  editor.apply(tube.c, X, beyond);
  CHECK(evaluate_point(beyond, OutputSpec::defaults(tube.c), ws).status == RunStatus::Infeasible);
  CHECK(ws.train.warm_starts.empty());
}

TEST_CASE("Monte Carlo percentiles of X follow the first-order PFR solution", "[sweep]") {
  // X = 1 - exp(-k tau) (isothermal first-order plug flow; Levenspiel,
  // Chemical Reaction Engineering, 3rd ed., ch. 5) is increasing in k, and
  // with 401 runs the type-7 P5, P50 and P95 fall exactly on runs
  // (h = 20, 200, 380), so each percentile of X is X at that percentile of k.
  const Fixture f(kFirstOrder);
  const Study s = f.study({}, {"reactions.r1.rate.A=lognormal(1e-3,0.3)"}, 401, 5);
  const OutputSpec o = OutputSpec::parse("X", f.c);
  const auto rows = run(f, s, o, 2);
  std::vector<double> k;
  for (const auto& r : rows) k.push_back(r.inputs[0]);
  const auto pk = summarize(k);
  const auto sum = summarize_study(o.names(), {}, rows);
  REQUIRE(sum.percentiles[0].p);
  const double tau = 0.1 / kV0;
  CHECK(sum.percentiles[0].p->p5 == Approx(1 - std::exp(-pk->p5 * tau)).epsilon(1e-7));
  CHECK(sum.percentiles[0].p->p50 == Approx(1 - std::exp(-pk->p50 * tau)).epsilon(1e-7));
  CHECK(sum.percentiles[0].p->p95 == Approx(1 - std::exp(-pk->p95 * tau)).epsilon(1e-7));
  // The sample median of k is near the distribution's median 1e-3: within
  // 5 SE, SE of a median = 1.2533 sigma/sqrt(n) on the log scale (normal theory).
  CHECK(std::abs(std::log(pk->p50 / 1e-3)) < 5 * 1.2533 * 0.3 / std::sqrt(401.0));
}

TEST_CASE("the design margin is the P95 of the sized volume, infeasible runs are rows", "[sweep]") {
  // Reversible first order A <=> B, K = 1: X = X_eq (1 - exp(-k (1 + 1/K) tau))
  // with X_eq = K / (1 + K) (Levenspiel, 3rd ed., ch. 3), so the volume to
  // reach X is V = -v0 ln(1 - X / X_eq) / (k (1 + 1/K)).
  const Fixture f(test::kSizedTube);
  const auto V_needed = [](double k, double X) { return -kV0 * std::log(1 - X / 0.5) / (2 * k); };
  SECTION("grid over the target: beyond equilibrium is infeasible, with its reason") {
    const Study s = f.study({"train.R1.target.conversion=0.2:0.7:6"});
    const OutputSpec o = OutputSpec::defaults(f.c);
    const auto rows = run(f, s, o, 2);
    REQUIRE(rows.size() == 6);
    const auto col = o.names();
    const auto v = std::find(col.begin(), col.end(), "R1.volume") - col.begin();
    CHECK(rows[0].result.status == RunStatus::Ok);
    CHECK(*rows[0].result.outputs[v] == Approx(V_needed(1e-3, 0.2)).epsilon(1e-6));
    CHECK(*rows[2].result.outputs[v] == Approx(V_needed(1e-3, 0.4)).epsilon(1e-6));
    for (int i : {4, 5}) {
      CHECK(rows[i].result.status == RunStatus::Infeasible);
      CHECK_FALSE(rows[i].result.message.empty());
      for (const auto& out : rows[i].result.outputs) CHECK_FALSE(out);
    }
    const StudyHeader h{"t", "x", s.definition(), o.names()};
    const std::string csv = sweep_csv(h, {}, s.input_names(), rows);
    CHECK(csv.find("nan") == std::string::npos);
    CHECK(csv.find(",infeasible,") != std::string::npos);
    const auto sum = summarize_study(o.names(), design_margin_columns(f.c), rows);
    CHECK(sum.statuses.at("infeasible") >= 2);
  }
  SECTION("Monte Carlo over k: P95 volume = volume at the P5 rate constant") {
    const Study s = f.study({}, {"reactions.r1.rate.A=uniform(5e-4,2e-3)"}, 401, 3);
    const OutputSpec o = OutputSpec::defaults(f.c);
    const auto rows = run(f, s, o, 2);
    std::vector<double> k;
    for (const auto& r : rows) k.push_back(r.inputs[0]);
    const auto sum = summarize_study(o.names(), design_margin_columns(f.c), rows);
    REQUIRE(sum.margins.size() == 1);
    CHECK(sum.margins[0].column == "R1.volume");
    REQUIRE(sum.margins[0].p95);
    CHECK(*sum.margins[0].p95 == Approx(V_needed(summarize(k)->p5, 0.3)).epsilon(1e-6));
  }
}

TEST_CASE("the design margin is unbounded when over 5 % of runs cannot meet the target",
          "[sweep]") {
  std::vector<RunRow> rows(20);
  for (std::size_t i = 0; i < 20; ++i) {
    rows[i].run = i;
    rows[i].result.outputs = {double(i + 1)};
  }
  // 20 values 1..20: P95 at h = 18.05 -> 19.05.
  auto s = summarize_study({"R1.volume"}, {"R1.volume"}, rows);
  CHECK(*s.margins[0].p95 == Approx(19.05).epsilon(1e-14));
  // One infeasible run (+infinity) sits above h = 18.05: unbounded.
  rows[19].result = {{std::nullopt}, RunStatus::Infeasible, "beyond equilibrium"};
  s = summarize_study({"R1.volume"}, {"R1.volume"}, rows);
  CHECK_FALSE(s.margins[0].p95);
  CHECK(*s.margins[0].p50 == Approx(10.5).epsilon(1e-14));
  CHECK(s.margins[0].infeasible == 1);
  // Output percentiles are over the runs that succeeded only.
  CHECK(s.percentiles[0].p->n == 19);
}

TEST_CASE("sampled values outside a field's range become invalid-input rows", "[sweep]") {
  const Fixture f(kFirstOrder);
  // normal(0.01 m3, 0.02 m3): about 31 % of draws are negative volumes.
  const Study s = f.study({}, {"train.R1.volume=normal(0.01m3,0.02m3)"}, 50, 1);
  const auto rows = run(f, s, OutputSpec::defaults(f.c), 2);
  std::size_t bad = 0;
  for (const auto& r : rows)
    if (r.result.status == RunStatus::InvalidInput) {
      ++bad;
      CHECK(r.inputs[0] <= 0);
      CHECK(r.result.message.find("train.R1.volume") != std::string::npos);
    } else {
      CHECK(r.result.status == RunStatus::Ok);
    }
  CHECK(bad > 0);
  CHECK(bad < 50);
}

namespace {

// Liquid A => B, isothermal, r = k C_A^n / (1 + K_A(T) C_A)^m (invented
// data): v0 = 1e-4 m3/s and C_A0 = 1e4 mol/m3 throughout, tau = 1000 s.
// The adsorption term's T_ref (350 K) differs from the feed's 300 K so
// that its dH moves the run.
constexpr const char* kInhibited = R"(title: inhibited tube (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3}
reactions:
  - id: r1
    equation: A => B
    rate:
      A: 1e-3
      Ea: 0
      adsorption:
        terms: [{K: 1e-4 m3/mol, dH: 0, T_ref: 350 K, species: {A: 1}}]
    dH: 0
feed: {T: 300 K, P: 1 bar, flows: {A: 1 mol/s}}
key: A
train:
  - {type: pfr, id: R1, volume: 0.1 m3, heat: isothermal}
)";

// The root in (0, 1) of an increasing g(X) - k tau (bisection to 1e-15).
double solve_x(const std::function<double(double)>& g, double k_tau) {
  double lo = 0, hi = 1 - 1e-15;
  for (int i = 0; i < 200 && hi - lo > 1e-15; ++i) {
    const double mid = 0.5 * (lo + hi);
    (g(mid) < k_tau ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

}  // namespace

TEST_CASE("rate orders and adsorption fields are case paths that move the run as closed forms say",
          "[sweep]") {
  // Integrated plug-flow design equations k tau = int_C^C0 (1 + K C)^m /
  // C^n dC at constant density (Levenspiel, Chemical Reaction Engineering,
  // 3rd ed., ch. 5, for the power laws; the inhibited forms integrated by
  // hand): n = 1, m = 1: -ln(1-X) + K C0 X; n = 2, m = 1: X/(C0 (1-X)) -
  // K ln(1-X); n = 1, m = 2: -ln(1-X) + 2 K C0 X + K^2 C0^2 (1-(1-X)^2)/2.
  const Fixture f(kInhibited);
  const std::vector<std::size_t> which{
      f.table.find("reactions.r1.rate.A", "t"),
      f.table.find("reactions.r1.rate.orders.A", "t"),
      f.table.find("reactions.r1.rate.adsorption.exponent", "t"),
      f.table.find("reactions.r1.rate.adsorption.terms.0.K", "t"),
      f.table.find("reactions.r1.rate.adsorption.terms.0.dH", "t"),
      f.table.find("reactions.r1.rate.adsorption.terms.0.T_ref", "t")};
  // B has no order: not a path of this law.
  CHECK(input_error([&] {
          (void)f.table.find("reactions.r1.rate.orders.B", "--vary");
        }).find("unknown case path") != std::string::npos);
  const CaseEditor editor(f.table, which);
  const double C0 = 1e4, tau = 1000, R = 8.314462618, T = 300;
  TrainOptions opt;
  opt.equilibrium_views = false;
  opt.solvers.tube.cvode.rtol = 1e-10;
  opt.solvers.tube.cvode.atol = 1e-12;
  struct Row {
    double k, n, m, K, dH;
  };
  for (const Row& row : {Row{1e-3, 1, 1, 1e-4, 0}, Row{2e-7, 2, 1, 2e-4, 0},
                         Row{1e-3, 1, 2, 5e-5, 0}, Row{1e-3, 1, 1, 1e-4, -20e3}}) {
    INFO("k " << row.k << " n " << row.n << " m " << row.m << " dH " << row.dH);
    Case work = f.c;
    const std::vector<double> v{row.k, row.n, row.m, row.K, row.dH, 350.0};
    editor.apply(f.c, v, work);
    const double K = row.K * std::exp(-row.dH / R * (1 / T - 1 / 350.0));
    std::function<double(double)> g;
    if (row.n == 2)
      g = [&](double x) { return x / (C0 * (1 - x)) - K * std::log1p(-x); };
    else if (row.m == 2)
      g = [&](double x) {
        return -std::log1p(-x) + 2 * K * C0 * x + K * K * C0 * C0 * (1 - (1 - x) * (1 - x)) / 2;
      };
    else
      g = [&](double x) { return -std::log1p(-x) + K * C0 * x; };
    const double X = solve_x(g, row.k * tau);
    CHECK(X > 0.05);
    CHECK(X < 0.99);
    CHECK_THAT(run_train(work, opt).conversion, Catch::Matchers::WithinRel(X, 1e-7));
  }
}
