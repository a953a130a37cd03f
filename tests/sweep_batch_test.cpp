// Batched sweeps (runs of a chain solved as one CVODE system): rows
// against the analytic plug-flow solution and against lone runs, the same
// rows for any jobs and shards, and failed batches rerun run by run.
#include <fmt/format.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/sweep/study.hpp"
#include "rxtrain/sweep/sweep.hpp"
#include "rxtrain/sweep/sweep_csv.hpp"
#include "sized_tube.hpp"

using namespace rxtrain;
using namespace rxtrain::sweep;

namespace {

// Isothermal first-order A => B in a liquid tube (invented data):
// v0 = 1e-4 m3/s, X = 1 - exp(-k V / v0).
constexpr const char* kTube = R"(title: first-order tube (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3, thermo: {cp: 150 J/mol/K, h_f: 0 J/mol}}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3, thermo: {cp: 150 J/mol/K, h_f: 0 J/mol}}
reactions:
  - id: r1
    equation: A => B
    rate: {A: 1e-3, Ea: 0}
feed: {T: 300 K, P: 1 bar, flows: {A: 1 mol/s}}
key: A
train:
  - {type: pfr, id: R1, volume: 0.1 m3, heat: isothermal}
  - {type: exchanger, id: E1, T_out: 310 K}
  - {type: pfr, id: R2, volume: 0.1 m3, heat: isothermal}
)";

std::string demo(const char* name) {
  std::ifstream in(std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases" / name);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

struct Fixture {
  UnitParser units;
  Case c;
  CasePathTable table;
  explicit Fixture(const std::string& text)
      : c(load_case_from_string(text, "t.yaml", units)), table(c) {}
  // A study as `rxtrain sweep` makes it: batched where it can be.
  Study study(std::vector<std::string> vary, std::vector<std::string> sample = {},
              std::size_t runs = 0, const OutputSpec* o = nullptr) const {
    Study s = parse_study(vary, sample, runs, 3, table, units);
    const OutputSpec d = OutputSpec::defaults(c);
    if (batched_study(c, table, o ? *o : d, {})) s.chain = kBatchRuns;
    return s;
  }
};

std::vector<RunRow> run(const Fixture& f, const Study& s, const OutputSpec& o, std::size_t jobs,
                        Shard shard = {}, long max_steps = 200000) {
  SweepOptions opt;
  opt.jobs = jobs;
  opt.shard = shard;
  opt.train.solvers.tube.cvode.max_steps = max_steps;
  return run_sweep(f.c, f.table, s, o, opt);
}

}  // namespace

TEST_CASE("a batched study's rows follow the analytic plug-flow solution", "[sweep][batch]") {
  // Two first-order tubes in series: X = 1 - exp(-k (V1 + V2) / v0)
  // (isothermal first-order plug flow; Levenspiel, Chemical Reaction
  // Engineering, 3rd ed., ch. 5); the rate has Ea = 0, so the exchanger
  // between them changes nothing.
  const Fixture f(kTube);
  const OutputSpec o = OutputSpec::parse("X,R1.conversion", f.c);
  const Study s = f.study(
      {}, {"reactions.r1.rate.A=lognormal(1e-3,0.5)", "train.R2.volume=uniform(0.01m3,0.3m3)"}, 40,
      &o);
  REQUIRE(s.chain_length() == kBatchRuns);
  const auto rows = run(f, s, o, 2);
  REQUIRE(rows.size() == 40);
  for (const auto& r : rows) {
    REQUIRE(r.result.status == RunStatus::Ok);
    const double k = r.inputs[0], V2 = r.inputs[1];
    CHECK(*r.result.outputs[0] == Approx(1 - std::exp(-k * (0.1 + V2) / 1e-4)).epsilon(1e-7));
    CHECK(*r.result.outputs[1] == Approx(1 - std::exp(-k * 0.1 / 1e-4)).epsilon(1e-7));
  }
}

TEST_CASE("batched rows are as accurate as lone runs", "[sweep][batch]") {
  // Error against runs at rtol 1e-12 (the reference), worst over runs and
  // columns (X and temperatures), for lone runs and for batched ones at
  // the default rtol 1e-8: batching must not make the worst run worse
  // (within a factor 2, rounding of the step sequence), and both stay
  // near rtol (the cost-vs-rtol table of docs/performance.md: 7.9e-9 in X).
  const Fixture f(demo("so2-three-bed-converter.yaml"));
  const OutputSpec o = OutputSpec::defaults(f.c);
  const std::vector<std::string> vary{"feed.T=390degC:440degC:20"};
  const Study s = f.study(vary);
  REQUIRE(s.chain_length() == kBatchRuns);  // batches of 16 and 4
  const Study lone = parse_study(vary, {}, 0, 1, f.table, f.units);
  REQUIRE(lone.chain_length() == 1);
  SweepOptions ref_opt;
  ref_opt.jobs = 2;
  ref_opt.train.solvers.tube.cvode.rtol = 1e-12;
  const auto ref = run_sweep(f.c, f.table, lone, o, ref_opt);
  const auto batched = run(f, s, o, 2);
  const auto alone = run(f, lone, o, 2);
  double worst_batched = 0, worst_alone = 0;
  for (std::size_t i = 0; i < ref.size(); ++i) {
    // The hotter feeds take B1 past T_max: over_limit rows, with outputs.
    REQUIRE(has_outputs(batched[i].result.status));
    REQUIRE(alone[i].result.status == batched[i].result.status);
    for (std::size_t c = 0; c < o.columns().size(); ++c) {
      // STAGE.over_limit is STAGE.T_max less the limit (0 within it): its
      // error is T_max's, checked in that column.
      if (o.columns()[c].field == "over_limit") continue;
      const double r = *ref[i].result.outputs[c];
      const auto err = [&](const RunRow& row) { return std::abs(*row.result.outputs[c] - r) / r; };
      worst_batched = std::max(worst_batched, err(batched[i]));
      worst_alone = std::max(worst_alone, err(alone[i]));
    }
  }
  INFO("worst relative error: batched " << worst_batched << ", alone " << worst_alone);
  CHECK(worst_batched <= 2 * worst_alone);
  CHECK(worst_batched < 1e-7);
  CHECK(worst_alone < 1e-7);
}

TEST_CASE("batched rows and CSV are identical for any jobs and shards", "[sweep][batch]") {
  const Fixture f(kTube);
  const OutputSpec o = OutputSpec::defaults(f.c);
  const Study s = f.study(
      {}, {"reactions.r1.rate.A=lognormal(1e-3,0.3)", "train.R1.volume=normal(0.1m3,0.01m3)"}, 37);
  REQUIRE(s.chain_length() == kBatchRuns);
  const StudyHeader h{"test", "abc", s.definition(), o.names()};
  const auto names = s.input_names();
  const std::string serial = sweep_csv(h, {}, names, run(f, s, o, 1));
  CHECK(sweep_csv(h, {}, names, run(f, s, o, 2)) == serial);
  CHECK(sweep_csv(h, {}, names, run(f, s, o, 3)) == serial);
  // Shards of 37 runs in 4 begin and end inside batches.
  std::vector<std::pair<std::string, std::string>> shards;
  for (std::size_t k : {2, 4, 1, 3})
    shards.emplace_back(fmt::format("s{}.csv", k),
                        sweep_csv(h, {k, 4}, names, run(f, s, o, 2, {k, 4})));
  CHECK(merge_sweep_csv(shards).csv == serial);
}

TEST_CASE("a failed batch is rerun run by run, each row with its own reason", "[sweep][batch]") {
  const Fixture f(kTube);
  const OutputSpec o = OutputSpec::defaults(f.c);
  SECTION("runs that cannot start leave the batch to the others") {
    // A sampled volume below zero is refused by the editor (invalid input).
    const Study s = f.study({}, {"train.R1.volume=normal(0.05m3,0.05m3)"}, 40);
    REQUIRE(s.chain_length() == kBatchRuns);
    const auto rows = run(f, s, o, 1);
    std::size_t invalid = 0;
    for (const auto& r : rows) {
      const double V1 = r.inputs[0];
      if (V1 <= 0) {
        CHECK(r.result.status == RunStatus::InvalidInput);
        ++invalid;
        continue;
      }
      REQUIRE(r.result.status == RunStatus::Ok);
      CHECK(*r.result.outputs[0] == Approx(1 - std::exp(-1e-3 * (V1 + 0.1) / 1e-4)).epsilon(1e-7));
    }
    CHECK(invalid >= 1);
  }
  SECTION("a batch the integrator cannot finish fails each run with the run's own message") {
    const Study s = f.study({"reactions.r1.rate.A=1e-3:1e-1:5"});
    REQUIRE(s.chain_length() == kBatchRuns);
    const auto rows = run(f, s, o, 1, {}, 100);  // too few steps for the fast runs
    std::size_t failed = 0;
    for (const auto& r : rows) {
      if (r.result.status == RunStatus::Ok) continue;
      ++failed;
      CHECK(r.result.status == RunStatus::SolverFailure);
      CHECK(r.result.message.find("batch") == std::string::npos);
      CHECK(r.result.message.find("R1 at V =") == 0);
    }
    CHECK(failed >= 1);
    CHECK(rows[0].result.status == RunStatus::Ok);  // the slow run alone needs few steps
  }
}

TEST_CASE("studies whose runs cannot be batched keep their own chains", "[sweep][batch]") {
  const Fixture so2(demo("so2-three-bed-converter.yaml"));
  // Equilibrium columns need full profiles.
  const OutputSpec views = OutputSpec::parse("X,B1.equilibrium.approach_T", so2.c);
  CHECK_FALSE(batched_study(so2.c, so2.table, views, {}));
  CHECK(batched_study(so2.c, so2.table, OutputSpec::defaults(so2.c), {}));
  // A stirred tank (warm-start chains) or a bed sized to a target.
  const Fixture tank(demo("liquid-tank-then-tube.yaml"));
  CHECK_FALSE(batched_study(tank.c, tank.table, OutputSpec::defaults(tank.c), {}));
}

TEST_CASE("batched beds sized to a target follow the analytic volume", "[sweep][batch]") {
  // X = X_eq (1 - exp(-k (1 + 1/K) tau)), X_eq = K / (1 + K) (Levenspiel,
  // Chemical Reaction Engineering, 3rd ed., ch. 3), so the volume to reach
  // X is V = -v0 ln(1 - X / X_eq) / (k (1 + 1/K)), v0 = 1e-4 m3/s.
  const Fixture f(test::kSizedTube);
  const OutputSpec o = OutputSpec::defaults(f.c);
  const auto V_needed = [](double k, double X) { return -1e-4 * std::log(1 - X / 0.5) / (2 * k); };
  SECTION("Monte Carlo over k: each run stops at its own target") {
    const Study s = f.study({}, {"reactions.r1.rate.A=uniform(5e-4,2e-3)"}, 40);
    REQUIRE(s.chain_length() == kBatchRuns);
    const auto rows = run(f, s, o, 2);
    const auto col = o.names();
    const auto v = std::find(col.begin(), col.end(), "R1.volume") - col.begin();
    for (const auto& r : rows) {
      REQUIRE(r.result.status == RunStatus::Ok);
      CHECK(*r.result.outputs[v] == Approx(V_needed(r.inputs[0], 0.3)).epsilon(1e-6));
      CHECK(*r.result.outputs[0] == Approx(0.3).epsilon(1e-9));  // X at the outlet
    }
  }
  SECTION("targets beyond equilibrium: infeasible rows with a lone run's reason") {
    const std::vector<std::string> vary{"train.R1.target.conversion=0.2:0.7:6"};
    const Study s = f.study(vary);
    REQUIRE(s.chain_length() == kBatchRuns);
    const auto rows = run(f, s, o, 1);
    const auto lone = run(f, parse_study(vary, {}, 0, 1, f.table, f.units), o, 1);
    for (int i : {4, 5}) {
      CHECK(rows[i].result.status == RunStatus::Infeasible);
      CHECK(rows[i].result.message == lone[i].result.message);
      CHECK_FALSE(rows[i].result.message.empty());
    }
    // The batch failed as a whole, so its feasible runs were run alone too.
    const auto col = o.names();
    const auto v = std::find(col.begin(), col.end(), "R1.volume") - col.begin();
    CHECK(*rows[2].result.outputs[v] == *lone[2].result.outputs[v]);
  }
}
