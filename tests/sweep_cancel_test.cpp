// Cancelling a sweep (SweepOptions::cancel), as the Python module does on
// Ctrl-C: the hand-out stops, the tasks under way finish, the caller gets
// the exception; a cancel hook that never fires changes no row.
#include <atomic>
#include <catch2/catch.hpp>
#include <chrono>
#include <stdexcept>
#include <string>
#include <thread>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/sweep/study.hpp"
#include "rxtrain/sweep/sweep.hpp"
#include "rxtrain/sweep/sweep_csv.hpp"
#include "rxtrain/sweep/thread_pool.hpp"

using namespace rxtrain;
using namespace rxtrain::sweep;

TEST_CASE("an exception from parallel_for's progress stops the hand-out", "[sweep]") {
  std::atomic<int> ran{0};
  int calls = 0;
  const auto body = [&](std::size_t, std::size_t) {
    std::this_thread::sleep_for(std::chrono::milliseconds(2));
    ++ran;
  };
  const auto progress = [&](std::size_t) {
    if (++calls == 2) throw std::runtime_error("stop");
  };
  CHECK_THROWS_WITH(parallel_for(5000, 2, body, progress, std::chrono::milliseconds(5)), "stop");
  // 5000 tasks of 2 ms on 2 threads take 5 s; it stopped after about 10 ms.
  CHECK(ran.load() > 0);
  CHECK(ran.load() < 1000);
  CHECK(calls == 2);  // never asked again once stopping
}

TEST_CASE("a sweep stops with SweepCancelled and an idle cancel hook changes nothing", "[sweep]") {
  const UnitParser units;
  const Case c =
      load_case(std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-three-bed-converter.yaml", units);
  const CasePathTable table(c);
  const Study study = parse_study({}, {"feed.T=normal(420degC,5K)"}, 400, 3, table, units);
  const OutputSpec outputs = OutputSpec::defaults(c);
  SweepOptions plain;
  plain.jobs = 2;
  const auto expected = run_sweep(c, table, study, outputs, plain);

  SweepOptions watched = plain;
  int asked = 0;
  watched.cancel = [&] { return ++asked < 0; };
  watched.progress_period = std::chrono::milliseconds(1);
  const auto rows = run_sweep(c, table, study, outputs, watched);
  const StudyHeader header{"v", "sha", study.definition(), outputs.names()};
  CHECK(sweep_csv(header, Shard{}, study.input_names(), rows) ==
        sweep_csv(header, Shard{}, study.input_names(), expected));
  CHECK(asked >= 1);  // asked at the end at least

  SweepOptions cancelled = plain;
  cancelled.cancel = [] { return true; };
  CHECK_THROWS_AS(run_sweep(c, table, study, outputs, cancelled), SweepCancelled);
}
