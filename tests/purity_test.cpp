// Outlet-purity targets (`target: {outlet: {SP: x}}`): a tubular stage
// sized until a species' outlet mole fraction falls to x. Checked against
// the closed-form first-order design equation, by rating the size found,
// and against the equilibrium a reversible reaction cannot pass. All
// kinetic and physical data here are invented for the tests.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "rxtrain/base/error.hpp"
#include "rxtrain/stages/cstr.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "test_species.hpp"

using namespace rxtrain;

namespace {

// Equal molar volumes (0.1 kg/mol at 1000 kg/m3): constant volumetric flow.
Species species(const std::string& id) {
  return test::make_species(id, 150, 0.0, 100.0, 0.1, 1000);
}

// Liquid A -> B (or A <=> B with K = `K_eq`), first order in A, with an
// inert I that dilutes the feed.
Mechanism first_order(double k, std::optional<double> K_eq = {}) {
  Reaction r;
  r.id = "R";
  r.equation = K_eq ? "A <=> B" : "A => B";
  r.nu = {-1, 1, 0};
  r.rate.orders = {1, 0, 0};
  r.rate.A = k;
  r.rate.Ea = 50e3;
  r.rate.T_ref = 350.0;
  r.dH_298 = -40e3;
  if (K_eq) {
    r.reversible = true;
    r.equilibrium = {EquilibriumSource::Kind::VantHoff, *K_eq, 350.0, 0.0};
  }
  return Mechanism(Phase::Liquid, {species("A"), species("B"), species("I")}, {r});
}

ReactorSpec purity_stage(double x) {
  ReactorSpec s;
  s.id = "R1";
  s.heat = HeatMode::Isothermal;
  s.target_outlet = OutletTarget{0, x};
  s.where = {"case.yaml", 12, 5};
  return s;
}

const Stream kInlet{350.0, 2e5, {2.0, 0.0, 8.0}};  // x_A = 0.2
constexpr double kV0 = 10.0 * 0.1 / 1000;          // m3/s

}  // namespace

// Isothermal first order at constant v: x_A = x_A0 exp(-k V / v0) (the
// first-order tubular design equation, analytic; the total flow is
// constant for A -> B), so V = (v0 / k) ln(x_A0 / x).
TEST_CASE("a tube sized to 1 ppm of A: closed form, and rating it gives 1 ppm back", "[purity]") {
  const double k = 0.05;
  const Mechanism mech = first_order(k);
  SunContext ctx;
  PfrOptions tight;
  tight.cvode.rtol = 1e-10;
  tight.cvode.atol = 1e-16;
  for (const double x : {1e-6, 1e-3}) {
    const StageResult sized = run_pfr(mech, purity_stage(x), kInlet, {0, 2.0}, ctx, tight);
    INFO("target " << x);
    CHECK(sized.sized);
    CHECK(*sized.volume == Approx(kV0 / k * std::log(0.2 / x)).epsilon(1e-8));
    // The round trip, at the default tolerances as `run` uses them.
    const StageResult s2 = run_pfr(mech, purity_stage(x), kInlet, {0, 2.0}, ctx);
    ReactorSpec rated = purity_stage(x);
    rated.target_outlet.reset();
    rated.volume = *s2.volume;
    const StageResult r = run_pfr(mech, rated, kInlet, {0, 2.0}, ctx);
    const double x_out = r.outlet.F[0] / (r.outlet.F[0] + r.outlet.F[1] + r.outlet.F[2]);
    CHECK(x_out == Approx(x).epsilon(1e-8));
    CHECK(s2.outlet.F[0] == r.outlet.F[0]);  // the sized result is that rating
  }
}

// A <=> B at constant T stops at x_A = x_A0 / (1 + K) (the equilibrium
// C_B / C_A = K of the law of mass action, analytic): 1 ppm lies beyond it,
// and the refusal quotes that least mole fraction.
TEST_CASE("a purity past equilibrium is refused with the least reachable mole fraction",
          "[purity]") {
  const double K = 1e4;
  const Mechanism mech = first_order(0.05, K);
  SunContext ctx;
  const double x_eq = 0.2 / (1 + K);  // 19.998 ppm
  try {
    run_pfr(mech, purity_stage(1e-6), kInlet, {0, 2.0}, ctx);
    FAIL("an unreachable purity was sized");
  } catch (const InfeasibleError& e) {
    const std::string m = e.what();
    INFO(m);
    CHECK(m.find("out of reach") != std::string::npos);
    const auto at = m.find("the least this stage can reach is ");
    REQUIRE(at != std::string::npos);
    const double best = std::stod(m.substr(at + 34)) * 1e-6;
    CHECK(best == Approx(x_eq).epsilon(1e-4));
    CHECK(e.where().line == 12);
  }
  // Just above equilibrium it is sized.
  const StageResult r = run_pfr(mech, purity_stage(1.01 * x_eq), kInlet, {0, 2.0}, ctx);
  CHECK(r.outlet.F[0] / 10.0 == Approx(1.01 * x_eq).epsilon(1e-8));
}

TEST_CASE("a purity not below the stage inlet's is refused at the stage", "[purity]") {
  const Mechanism mech = first_order(0.05);
  SunContext ctx;
  CHECK_THROWS_AS(run_pfr(mech, purity_stage(0.25), kInlet, {0, 2.0}, ctx), InputError);
}

// A stirred tank, isothermal first order at constant v: the tank's balance
// F_A0 - F_A = k C_A V gives x_A = x_A0 / (1 + k V / v0) (the first-order
// CSTR design equation, analytic; A -> B keeps the total flow), so
// V = (v0 / k) (x_A0 / x - 1). Rating the size found gives x back.
TEST_CASE("a stirred tank sized to an outlet purity: closed form and round trip", "[purity]") {
  const double k = 0.05;
  const Mechanism mech = first_order(k);
  SunContext ctx;
  ReactorSpec tank = purity_stage(1e-3);
  tank.type = ReactorType::Cstr;
  const StageResult sized = run_cstr(mech, tank, kInlet, {0, 2.0}, ctx);
  CHECK(sized.sized);
  REQUIRE(sized.outlet_target);
  CHECK(*sized.volume == Approx(kV0 / k * (0.2 / 1e-3 - 1)).epsilon(1e-8));
  ReactorSpec rated = tank;
  rated.target_outlet.reset();
  rated.volume = *sized.volume;
  const StageResult r = run_cstr(mech, rated, kInlet, {0, 2.0}, ctx);
  CHECK(r.outlet.F[0] / 10.0 == Approx(1e-3).epsilon(1e-8));
}

// A <=> B in a tank stops short of x_A0 / (1 + K) at any finite size (law of
// mass action, analytic): a purity below it is refused, quoting the least
// mole fraction the tank reaches at the largest size searched. There the
// tank's balance x0 - x = k tau (x - (x0 - x) / K), tau = V / v0 (analytic)
// gives x = x0 (1 + k tau / K) / (1 + k tau (1 + 1/K)).
TEST_CASE("a stirred tank refuses a purity past equilibrium", "[purity]") {
  const double K = 1e4;
  const Mechanism mech = first_order(0.05, K);
  SunContext ctx;
  ReactorSpec tank = purity_stage(1e-6);
  tank.type = ReactorType::Cstr;
  try {
    run_cstr(mech, tank, kInlet, {0, 2.0}, ctx);
    FAIL("an unreachable purity was sized");
  } catch (const InfeasibleError& e) {
    const std::string m = e.what();
    INFO(m);
    const auto at = m.find("the least this tank reaches is ");
    REQUIRE(at != std::string::npos);
    const double best = std::stod(m.substr(at + 31)) * 1e-6;
    const auto at_V = m.find("at V = ");
    REQUIRE(at_V != std::string::npos);
    const double ktau = 0.05 * std::stod(m.substr(at_V + 7)) / kV0;
    CHECK(best > 0.2 / (1 + K));
    CHECK(best == Approx(0.2 * (1 + ktau / K) / (1 + ktau * (1 + 1 / K))).epsilon(1e-5));
    CHECK(e.where().line == 12);
  }
}
