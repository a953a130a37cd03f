// Yields and selectivities of wanted products (`products:`), checked
// against the closed form for first-order reactions in series. The kinetic
// and physical data are invented for the test.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include "rxtrain/flowsheet/train.hpp"
#include "test_species.hpp"

using namespace rxtrain;

namespace {

// Equal molar volumes (0.1 kg/mol at 1000 kg/m3): constant volumetric flow.
Species species(const std::string& id) {
  return test::make_species(id, 150, 0.0, 100.0, 0.1, 1000);
}

Reaction first_order(const std::string& id, const std::string& eq, std::vector<double> nu,
                     std::vector<double> orders, double k) {
  Reaction r;
  r.id = id;
  r.equation = eq;
  r.nu = std::move(nu);
  r.rate.orders = std::move(orders);
  r.rate.A = k;
  r.rate.Ea = 50e3;
  r.rate.T_ref = 350.0;
  r.dH_298 = -40e3;
  return r;
}

}  // namespace

// A -> B -> C, first order, isothermal plug flow at constant v (Levenspiel,
// Chemical Reaction Engineering, 3rd ed., ch. 8, reactions in series):
// X_A = 1 - exp(-k1 tau), Y_B = k1/(k2 - k1) (exp(-k1 tau) - exp(-k2 tau)),
// S_B = Y_B / X_A; cumulative over two beds.
TEST_CASE("yield and selectivity of B in A -> B -> C: the series closed form", "[yields]") {
  const double k1 = 0.02, k2 = 0.005;
  Case c;
  c.mechanism = Mechanism(Phase::Liquid, {species("A"), species("B"), species("C")},
                          {first_order("r1", "A => B", {-1, 1, 0}, {1, 0, 0}, k1),
                           first_order("r2", "B => C", {0, -1, 1}, {0, 1, 0}, k2)});
  c.feed = Stream{350.0, 2e5, {10.0, 0.0, 0.0}};
  c.key = 0;
  c.products = {1};
  const double v0 = 10.0 * 0.1 / 1000;
  for (const char* id : {"R1", "R2"}) {
    ReactorSpec s;
    s.id = id;
    s.heat = HeatMode::Isothermal;
    s.volume = 0.05;
    c.train.push_back(s);
  }
  TrainOptions o;
  o.solvers.tube.cvode.rtol = 1e-10;
  o.solvers.tube.cvode.atol = 1e-16;
  const TrainResult r = run_train(c, o);
  REQUIRE(r.products == std::vector<std::string>{"B"});
  for (int i = 0; i < 2; ++i) {
    const double tau = 0.05 * (i + 1) / v0;
    const double X = 1 - std::exp(-k1 * tau);
    const double Y = k1 / (k2 - k1) * (std::exp(-k1 * tau) - std::exp(-k2 * tau));
    const StageResult& s = r.stages[i];
    INFO("stage " << s.id);
    CHECK(s.conversion == Approx(X).epsilon(1e-8));
    CHECK(s.yield.at(0) == Approx(Y).epsilon(1e-8));
    REQUIRE(s.selectivity.at(0).has_value());
    CHECK(*s.selectivity[0] == Approx(Y / X).epsilon(1e-8));
  }
  CHECK(r.yield.at(0) == r.stages[1].yield[0]);
}
