// Interstage exchanger against the closed-form enthalpy of constant and
// polynomial heat capacities. Species data are invented for the test.
#include "rxtrain/stages/exchanger.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <optional>
#include <string>

#include "rxtrain/base/error.hpp"
#include "rxtrain/models/energy_balance.hpp"
#include "rxtrain/models/heat_exchange.hpp"

namespace {

using rxtrain::CpConstant;
using rxtrain::CpPolynomial;
using rxtrain::ExchangerSpec;
using rxtrain::Mechanism;
using rxtrain::Phase;
using rxtrain::Species;
using rxtrain::StageResult;
using rxtrain::Stream;
using rxtrain::ThermoModel;

Species species(const std::string& id, rxtrain::CpModel cp) {
  Species s;
  s.id = id;
  s.name = id;
  s.mw = 0.03;
  s.thermo = ThermoModel(std::move(cp), std::nullopt, std::nullopt);
  return s;
}

ExchangerSpec exchanger(std::optional<double> T_out, std::optional<double> duty) {
  ExchangerSpec s;
  s.id = "E1";
  s.T_out = T_out;
  s.duty = duty;
  s.where = {"case.yaml", 12, 5};
  return s;
}

double rel(double a, double b) { return std::abs(a - b) / std::abs(b); }

}  // namespace

TEST_CASE("exchanger duty for a given outlet temperature is the integral of cp dT", "[exchanger]") {
  // Constant cp: duty = sum_i F_i cp_i (T_out - T_in), closed form.
  const Mechanism mech(Phase::Gas, {species("A", CpConstant{30.0}), species("B", CpConstant{45.0})},
                       {});
  const Stream in{700.0, 3e5, {2.0, 3.0}};
  const rxtrain::ConversionBasis basis{0, 4.0};
  const StageResult r = rxtrain::run_exchanger(mech, exchanger(450.0, {}), in, basis);
  const double duty = (2.0 * 30.0 + 3.0 * 45.0) * (450.0 - 700.0);
  CHECK(rel(r.duty, duty) < 1e-12);
  CHECK(r.outlet.T == 450.0);
  CHECK(r.outlet.F == in.F);
  CHECK(r.outlet.P == in.P);
  CHECK(r.kind == rxtrain::StageKind::Exchanger);
  CHECK(r.T_max == 700.0);
  CHECK(r.T_min == 450.0);
  CHECK(r.conversion == 0.5);  // unchanged: (4 - 2) / 4
  REQUIRE(r.profile.size() == 2);
  CHECK(r.profile[0].V == 0);
  CHECK(r.profile[1].V == 0);
  CHECK(r.profile[0].T == 700.0);
  CHECK(r.profile[1].T == 450.0);
  CHECK(r.profile[1].X == 0.5);

  SECTION("the same duty gives back the outlet temperature") {
    const StageResult back = rxtrain::run_exchanger(mech, exchanger({}, duty), in, basis);
    CHECK(rel(back.outlet.T, 450.0) < 1e-9);
    CHECK(back.duty == duty);
  }
}

TEST_CASE("exchanger duty and outlet temperature round-trip with a polynomial cp", "[exchanger]") {
  // cp = a + b T + c T^2 + d T^3: integral of cp dT in closed form.
  const CpPolynomial p{{28.0, 0.01, 2e-6, -1e-9}, std::nullopt};
  const Mechanism mech(Phase::Gas, {species("A", p), species("B", CpConstant{35.0})}, {});
  const Stream in{350.0, 1e5, {1.5, 0.5}};
  const rxtrain::ConversionBasis basis{0, 1.5};
  auto H = [&](double T) {
    return p.a[0] * T + p.a[1] * T * T / 2 + p.a[2] * T * T * T / 3 + p.a[3] * T * T * T * T / 4;
  };
  const double T_out = 812.5;
  const double duty = 1.5 * (H(T_out) - H(350.0)) + 0.5 * 35.0 * (T_out - 350.0);
  const StageResult r = rxtrain::run_exchanger(mech, exchanger(T_out, {}), in, basis);
  CHECK(rel(r.duty, duty) < 1e-10);
  const StageResult back = rxtrain::run_exchanger(mech, exchanger({}, duty), in, basis);
  CHECK(rel(back.outlet.T, T_out) < 1e-9);
  CHECK(back.T_max == back.outlet.T);
  CHECK(back.T_min == 350.0);
}

TEST_CASE("exchanger with a duty no temperature can absorb is a solver error", "[exchanger]") {
  const Mechanism mech(Phase::Gas, {species("A", CpConstant{30.0})}, {});
  const Stream in{400.0, 1e5, {1.0}};
  // Cooling by more than the stream holds above 1 K: 30 * (400 - 1) J/mol.
  try {
    rxtrain::run_exchanger(mech, exchanger({}, -20000.0), in, {0, 1.0});
    FAIL("expected a SolverError");
  } catch (const rxtrain::SolverError& e) {
    const std::string what = e.what();
    CHECK(what.find("E1:") == 0);
    CHECK(what.find("no temperature") != std::string::npos);
    CHECK(what.find("nan") == std::string::npos);
  }
}

TEST_CASE("exchanger needs exactly one of outlet temperature and duty", "[exchanger]") {
  const Mechanism mech(Phase::Gas, {species("A", CpConstant{30.0})}, {});
  const Stream in{400.0, 1e5, {1.0}};
  CHECK_THROWS_AS(rxtrain::run_exchanger(mech, exchanger(300.0, 10.0), in, {0, 1.0}),
                  rxtrain::InputError);
  CHECK_THROWS_WITH(rxtrain::run_exchanger(mech, exchanger({}, {}), in, {0, 1.0}),
                    Catch::Matchers::StartsWith("case.yaml:12:5: error: stage E1:"));
}

TEST_CASE("temperature_for_enthalpy inverts the sensible enthalpy flow", "[exchanger]") {
  // Constant cp, reference 298.15 K: T = 298.15 + H / sum F cp, closed form.
  const Mechanism mech(Phase::Gas, {species("A", CpConstant{30.0}), species("B", CpConstant{20.0})},
                       {});
  const std::vector<double> F{1.0, 2.0};
  for (double H : {-5000.0, 0.0, 1.0, 123456.0}) {
    const double T = rxtrain::temperature_for_enthalpy(mech, F, H, 1000.0);
    CHECK(rel(T, 298.15 + H / 70.0) < 1e-12);
  }
}

// Counter-flow LMTD by hand: process 200 -> 80 °C against water 30 -> 45 °C.
// The ends: dT_a = 200 - 45 = 155 K, dT_b = 80 - 30 = 50 K; LMTD = (155 - 50)
// / ln(155 / 50) = 105 / ln 3.1 = 105 / 1.1314021114911 = 92.805200674072 K
// (the log-mean of the terminal differences, e.g. Incropera, Fundamentals of
// Heat and Mass Transfer, ch. 11). A heater's ends are both negative and give
// the same form: steam at 250 °C heating 60 -> 150 °C: (100 - 190) / ln(100 /
// 190) = 140.21882851984 K.
TEST_CASE("counter-flow LMTD, area and utility flow by hand", "[exchanger]") {
  using rxtrain::counterflow_lmtd;
  const double C = 273.15;
  CHECK(rel(*counterflow_lmtd(200 + C, 80 + C, 30 + C, 45 + C), 92.805200674072) < 1e-12);
  CHECK(rel(*counterflow_lmtd(60 + C, 150 + C, 250 + C, 250 + C), 140.21882851984) < 1e-12);
  // Equal ends: the common difference.
  CHECK(rel(*counterflow_lmtd(200 + C, 100 + C, 50 + C, 150 + C), 50.0) < 1e-12);
  // A cross (the water would leave hotter than the process enters its end),
  // and a pinch of zero, have no LMTD.
  CHECK_FALSE(counterflow_lmtd(200 + C, 80 + C, 30 + C, 210 + C));
  CHECK_FALSE(counterflow_lmtd(200 + C, 80 + C, 80 + C, 120 + C));
  // A = |Q| / (U LMTD); the water's flow |Q| / (cp dT): 1 MW, U = 350 W/(m2 K),
  // cp = 4180 J/(kg K): A = 30.786452013363 m2, 15.948963317384 kg/s.
  const auto z = rxtrain::size_exchanger(-1e6, 350, 200 + C, 80 + C, 30 + C, 45 + C, 4180.0);
  REQUIRE(z);
  CHECK(rel(z->area, 30.786452013363) < 1e-12);
  REQUIRE(z->utility_flow);
  CHECK(rel(*z->utility_flow, 15.948963317384) < 1e-12);
  // A utility on the wrong side: steam at 250 °C cannot heat 410 -> 430 °C.
  CHECK_FALSE(rxtrain::size_exchanger(1e6, 60, 410 + C, 430 + C, 250 + C, 250 + C, {}));
  CHECK(rxtrain::size_exchanger(-1e6, 60, 620 + C, 430 + C, 250 + C, 250 + C, {}));
  // A boiling utility has no flow from a sensible balance.
  CHECK_FALSE(
      rxtrain::size_exchanger(1e6, 350, 60 + C, 150 + C, 250 + C, 250 + C, {})->utility_flow);
}

TEST_CASE("an exchanger stage with U and a utility reports its size, and a cross is refused",
          "[exchanger]") {
  const Mechanism mech(Phase::Gas, {species("A", CpConstant{30.0}), species("B", CpConstant{45.0})},
                       {});
  const Stream in{700.0, 3e5, {2.0, 3.0}};
  const rxtrain::ConversionBasis basis{0, 4.0};
  ExchangerSpec x = exchanger(450.0, {});
  x.U = 200;
  x.utility = rxtrain::UtilitySpec{400.0, 500.0, 2000.0};
  const StageResult r = rxtrain::run_exchanger(mech, x, in, basis);
  REQUIRE(r.exchanger_size);
  const double lmtd = ((700.0 - 500.0) - (450.0 - 400.0)) / std::log(200.0 / 50.0);
  CHECK(rel(r.exchanger_size->lmtd, lmtd) < 1e-12);
  CHECK(rel(r.exchanger_size->area, std::abs(r.duty) / (200 * lmtd)) < 1e-12);
  CHECK(rel(*r.exchanger_size->utility_flow, std::abs(r.duty) / (2000.0 * 100.0)) < 1e-12);
  x.utility = rxtrain::UtilitySpec{400.0, 720.0, 2000.0};  // leaves hotter than the process enters
  try {
    rxtrain::run_exchanger(mech, x, in, basis);
    FAIL("a temperature cross was sized");
  } catch (const rxtrain::InputError& e) {
    CHECK(e.where().line == 12);
    CHECK_THAT(e.message(), Catch::Contains("temperature cross"));
  }
}
