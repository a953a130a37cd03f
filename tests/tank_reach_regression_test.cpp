// A stirred tank sized to a target whose feed has no finite volumetric flow
// (a product of molar mass 1e308 g/mol, found by the Python module's fuzz):
// cstr_reach read the state of a continuation that had found none and
// crashed. The run must end in a SolverError (an InfeasibleError saying
// the tank cannot reach its target), never a crash.
#include <catch2/catch.hpp>
#include <string>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"

using namespace rxtrain;

TEST_CASE("a tank whose feed has no finite volumetric flow fails cleanly", "[cstr]") {
  const UnitParser units;
  const Case c =
      load_case(std::string(RXTRAIN_SOURCE_DIR) +
                    "/tests/fuzz/corpus/case_loader/run-crash-tank-product-mw-1e308.yaml",
                units);
  CHECK_THROWS_AS(run_train(c, TrainOptions{}), SolverError);
}
