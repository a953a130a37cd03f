// Catalyst activity (`activity:` on a reactor stage) multiplies every rate
// in the stage: checked against the closed-form first-order tubular and
// stirred-tank design equations with the rate constant a k, through the
// case file, the table of case fields (sweeps) and the studies that design
// beds for it. All kinetic and physical data here are invented for the tests.
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <string>
#include <vector>

#include "input_error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/stages/cstr.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "rxtrain/studies/optimize.hpp"
#include "rxtrain/studies/staging.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "test_species.hpp"

using namespace rxtrain;

namespace {

Species species(const std::string& id, double cp, double mw, double density) {
  return test::make_species(id, cp, 0.0, 100.0, mw, density);
}

// Liquid A -> B, first order, equal molar volumes (constant v); per
// catalyst when `per_catalyst`, so that the activity meets the bulk density.
Mechanism first_order(double k, bool per_catalyst) {
  Reaction r;
  r.id = "R";
  r.equation = "A => B";
  r.nu = {-1, 1};
  r.rate.orders = {1, 0};
  r.rate.A = k;
  r.rate.Ea = 50e3;
  r.rate.T_ref = 350.0;
  r.rate.basis = per_catalyst ? RateBasis::Catalyst : RateBasis::Volume;
  r.dH_298 = -40e3;
  return Mechanism(Phase::Liquid, {species("A", 150, 0.1, 1000), species("B", 150, 0.1, 1000)},
                   {r});
}

ReactorSpec stage(ReactorType type, double V, double activity) {
  ReactorSpec s;
  s.id = "R1";
  s.type = type;
  s.heat = HeatMode::Isothermal;
  s.volume = V;
  s.activity = activity;
  s.where = {"case.yaml", 12, 5};
  return s;
}

constexpr const char* kCase = R"(
title: activity (invented data)
species:
  - {id: A, mw: 0.058 kg/mol, thermo: {cp: 120 J/mol/K, h_f: -100 kJ/mol, s: 300 J/mol/K}}
  - {id: B, mw: 0.058 kg/mol, thermo: {cp: 125 J/mol/K, h_f: -108 kJ/mol, s: 297 J/mol/K}}
reactions:
  - id: iso
    equation: A <-> B
    rate: {A: 0.02 1/s, Ea: 40 kJ/mol, T_ref: 450 K}
    equilibrium: thermo
feed: {T: 430 K, P: 10 bar, flow: 40 mol/s, composition: {A: 0.9, B: 0.1}}
key: A
target: {conversion: 0.5}
limits: {T_max: 600 K, T_in_min: 400 K}
train:
  - {type: pfr, id: R1, volume: 2 m3, activity: 0.7}
  - {type: pfr, id: R2, volume: 3 m3}
)";

}  // namespace

// Isothermal first order at constant v: X = 1 - exp(-a k tau) (analytic,
// the first-order tubular design equation with the rate constant a k).
TEST_CASE("activity scales the rate of a tubular bed: X = 1 - exp(-a k tau)", "[activity]") {
  const double k = 2e-3, bulk = 800, V = 1.5;
  const double v0 = 10.0 * 0.1 / 1000;
  const Stream in{350.0, 2e5, {10.0, 0.0}};
  SunContext ctx;
  PfrOptions tight;
  tight.cvode.rtol = 1e-10;
  tight.cvode.atol = 1e-14;
  for (const bool per_catalyst : {false, true}) {
    const Mechanism mech = first_order(k, per_catalyst);
    const double beta = per_catalyst ? bulk : 1.0;
    for (const double a : {1.0, 0.7, 0.25}) {
      ReactorSpec spec = stage(ReactorType::Pfr, V, a);
      if (per_catalyst) spec.bulk_density = bulk;
      const StageResult r = run_pfr(mech, spec, in, {0, 10.0}, ctx, tight);
      INFO("activity " << a << " per catalyst " << per_catalyst);
      CHECK(r.activity == a);
      CHECK(r.conversion == Approx(1 - std::exp(-a * beta * k * V / v0)).epsilon(1e-8));
    }
  }
}

// Isothermal first order: X = a k tau / (1 + a k tau) (analytic, the ideal
// stirred tank's mole balance with the rate constant a k).
TEST_CASE("activity scales the rate of a stirred tank: X = a k tau/(1 + a k tau)", "[activity]") {
  const double k = 0.3, V = 2e-3, a = 0.6;
  const double tau = V / (10.0 * 0.1 / 1000);
  const Mechanism mech = first_order(k, false);
  SunContext ctx;
  const StageResult r =
      run_cstr(mech, stage(ReactorType::Cstr, V, a), {350.0, 2e5, {10.0, 0.0}}, {0, 10.0}, ctx);
  CHECK(r.conversion == Approx(a * k * tau / (1 + a * k * tau)).epsilon(1e-8));
}

TEST_CASE("activity is read from the case and offered to sweeps for every reactor", "[activity]") {
  const UnitParser units;
  const Case c = load_case_from_string(kCase, "a.yaml", units);
  CHECK(std::get<ReactorSpec>(c.train[0]).activity == 0.7);
  CHECK(std::get<ReactorSpec>(c.train[1]).activity == 1.0);  // the default
  const sweep::CasePathTable paths(c);
  for (const char* name : {"train.R1.activity", "train.R2.activity"}) {
    const std::size_t i = paths.find(name, "--vary");
    INFO(name);
    CHECK(paths.at(i).range == kPositive);
  }
  // Set through the table, the run follows: R1 at activity 1 converts more.
  Case full = c;
  const std::vector<CaseField> one{paths.at(paths.find("train.R1.activity", "--vary"))};
  const std::vector<double> value{1.0};
  set_case_fields(full, one, value);
  const TrainResult low = run_train(c);
  const TrainResult high = run_train(full);
  CHECK(low.stages[0].activity == 0.7);
  CHECK(high.stages[0].conversion > low.stages[0].conversion);
}

TEST_CASE("staging and optimize refuse reactors of different activities", "[activity]") {
  const UnitParser units;
  const Case c = load_case_from_string(kCase, "a.yaml", units);
  // R1 (line 16 of kCase, which opens with a newline) gives 0.7, R2 the
  // default 1: no single activity to design new beds for.
  const std::string e = rxtrain::test::input_error([&] { run_staging(c); });
  CHECK_THAT(e, Catch::StartsWith("a.yaml:"));
  CHECK_THAT(e, Catch::Contains("stage R2 gives activity 1 but stage R1 gives 0.7; staging "
                                "designs every new bed for one activity"));
}

// With every rate times a, an adiabatic bed follows the same path in
// (X, T) (the energy balance does not see the rate) at 1/a times the
// catalyst: dW = F dX / (a r). So the staging policy (bed ends by approach
// to equilibrium, returns to the maximum-rate temperature, neither moved
// by a) and the optimum (its objective scaled by 1/a) give the same beds,
// each 1/a times as large. Case: the optimize demo (invented data).
TEST_CASE("staged and optimized beds are designed for the reactors' activity", "[activity]") {
  const UnitParser units;
  const Case fresh = load_case(
      (std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases" / "three-bed-optimize.yaml").string(),
      units);
  Case aged = fresh;
  const double a = 0.6;
  for (auto& sp : aged.train)
    if (auto* r = std::get_if<ReactorSpec>(&sp)) r->activity = a;

  const StagingResult s1 = run_staging(fresh), sa = run_staging(aged);
  REQUIRE(s1.beds.size() == sa.beds.size());
  for (std::size_t k = 0; k < s1.beds.size(); ++k) {
    INFO("bed " << k + 1);
    CHECK(sa.beds[k].T_in == Approx(s1.beds[k].T_in).margin(1e-6));
    CHECK(sa.beds[k].T_out == Approx(s1.beds[k].T_out).margin(1e-6));
    CHECK(*sa.beds[k].catalyst_mass == Approx(*s1.beds[k].catalyst_mass / a).epsilon(1e-6));
  }

  DesignOptions o;
  o.beds = 3;
  o.compare = false;
  const DesignResult d1 = optimize_design(fresh, o), da = optimize_design(aged, o);
  CHECK(da.activity == a);
  CHECK(*da.best.total_catalyst == Approx(*d1.best.total_catalyst / a).epsilon(1e-6));
  for (std::size_t k = 0; k < d1.best.bed.size(); ++k)
    CHECK(da.best.bed[k].T_in == Approx(d1.best.bed[k].T_in).margin(1e-3));  // T_settle
  // The optimum's beds carry the activity into the train that checks them.
  CHECK(da.best.checked_conversion == Approx(da.target).margin(1e-6));
  for (const auto& st : da.train.stages)
    if (st.kind != StageKind::Exchanger) CHECK(st.activity == a);
}
