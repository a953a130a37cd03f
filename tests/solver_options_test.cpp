// One SolverOptions for a whole train: what a caller sets once reaches every
// tube, every tank and the tubular runs inside the tanks.
#include "rxtrain/stages/solver_options.hpp"

#include <catch2/catch.hpp>

#include "rxtrain/flowsheet/train.hpp"

using namespace rxtrain;

TEST_CASE("a stirred tank's options carry the train's one tubular setting", "[solvers]") {
  SolverOptions o;
  o.tube.cvode.rtol = 1e-11;
  o.tube.max_space_time = 5e5;
  o.newton.max_iterations = 7;
  o.tank_continuation_steps = 12;
  o.tank_distinct_T = 0.5;
  const CstrOptions t = o.tank();
  CHECK(t.pfr.cvode.rtol == 1e-11);  // the tank's adiabatic-limit start and reach
  CHECK(t.pfr.max_space_time == 5e5);
  CHECK(t.newton.max_iterations == 7);
  CHECK(t.continuation_steps == 12);
  CHECK(t.distinct_T == 0.5);
  CHECK(t.guesses.empty());
  // TrainOptions owns exactly this one.
  TrainOptions train;
  train.solvers = o;
  CHECK(train.solvers.tank().pfr.cvode.rtol == 1e-11);
}

TEST_CASE("SolverOptions::validate names the bad field", "[solvers]") {
  CHECK(SolverOptions{}.validate().empty());
  SolverOptions o;
  o.tube.cvode.rtol = -1;
  CHECK(o.validate().rfind("tube.cvode:", 0) == 0);
  o = {};
  o.tube.max_space_time = 0;
  CHECK(o.validate().find("max_space_time") != std::string::npos);
  o = {};
  o.tank_continuation_steps = 0;
  CHECK(o.validate().find("tank_continuation_steps") != std::string::npos);
  o = {};
  o.tank_distinct_T = 0;
  CHECK(o.validate().find("tank_distinct_T") != std::string::npos);
}
