// Cold-shot quench: the conversion convention with side streams worked by
// hand, and a three-bed quench converter against GSL's rk8pd integrating
// the beds and doing the mixing in the test (constant heat capacities:
// the mixed temperature is the heat-capacity-flow weighted mean, derived
// here). All kinetic and physical data are invented for the tests.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "test_species.hpp"

using namespace rxtrain;
using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;
using rxtrain::test::make_species;

namespace {

constexpr double kCpA = 90, kCpB = 40, kCpI = 30;  // J/(mol K)
constexpr double k0 = 4e-8, Ea = 80e3, T0 = 600, dH298 = -60e3, rho_b = 800, P = 5e5;

// A => 2B, per kg of catalyst, first order in A's partial pressure.
Mechanism a_to_2b() {
  Reaction r;
  r.id = "R";
  r.equation = "A => 2 B";
  r.nu = {-1, 2, 0};
  r.rate.orders = {1, 0, 0};
  r.rate.A = k0;
  r.rate.Ea = Ea;
  r.rate.T_ref = T0;
  r.rate.basis = RateBasis::Catalyst;
  r.rate.driving = Driving::Pressure;
  r.dH_298 = dH298;
  return Mechanism(Phase::Gas,
                   {make_species("A", kCpA, 0.0, 200.0, 0.058, 700),
                    make_species("B", kCpB, 0.0, 150.0, 0.029, 650),
                    make_species("I", kCpI, 0.0, 190.0, 0.028, 800)},
                   {r});
}

ReactorSpec bed(const std::string& id, double V) {
  ReactorSpec s;
  s.id = id;
  s.volume = V;
  s.bulk_density = rho_b;
  s.where = {"case.yaml", 1, 1};
  return s;
}

QuenchSpec share(const std::string& id, double x, double T) {
  QuenchSpec q;
  q.id = id;
  q.share = x;
  q.T = T;
  q.where = {"case.yaml", 1, 1};
  return q;
}

Case quench_case(std::vector<StageSpec> train) {
  Case c;
  c.title = "quench";
  c.file = "case.yaml";
  c.mechanism = a_to_2b();
  c.feed = Stream{T0, P, {10.0, 0.0, 40.0}};
  c.key = 0;
  c.train = std::move(train);
  return c;
}

TrainOptions tight() {
  TrainOptions o;
  o.solvers.tube.cvode.rtol = 1e-11;
  o.solvers.tube.cvode.atol = 1e-12;
  o.equilibrium_views = false;
  return o;
}

}  // namespace

TEST_CASE("the conversion counts the key fed so far, side streams included", "[quench]") {
  // Feed 10 mol/s of A; a share of 0.2 bypasses bed B1, which gets 8. A
  // side stream of 3 mol/s of A joins after B2. Then, with F_A the flow
  // leaving each stage:
  //   B1: X = 1 - F_A / 8;  Q1: X = 1 - F_A / (8 + 2);  B2: as Q1;
  //   Q2: X = 1 - F_A / (10 + 3);  the train's X = 1 - F_A,out / 13.
  QuenchSpec side;
  side.id = "Q2";
  side.stream = Stream{500, P, {3.0, 0.0, 0.0}};
  side.where = {"case.yaml", 1, 1};
  Case c =
      quench_case({bed("B1", 0.3), share("Q1", 0.2, 450), bed("B2", 0.3), side, bed("B3", 0.3)});
  c.products = {1};  // B: its yield is on the key fed so far too
  validate_case(c);
  const TrainResult r = run_train(c, tight());
  REQUIRE(r.stages.size() == 5);
  // Y_B = |nu_A / nu_B| F_B / F_A,fed = 0.5 F_B / F_A,fed.
  REQUIRE(r.stages[1].yield.size() == 1);
  CHECK(r.stages[0].yield[0] == Approx(0.5 * r.stages[0].outlet.F[1] / 8).epsilon(1e-14));
  CHECK(r.stages[1].yield[0] == Approx(0.5 * r.stages[1].outlet.F[1] / 10).epsilon(1e-14));
  CHECK(r.yield[0] == Approx(0.5 * r.outlet.F[1] / 13).epsilon(1e-14));
  // One reaction: every converted A makes B, S = 1 at every stage.
  CHECK(*r.stages[3].selectivity[0] == Approx(1.0).epsilon(1e-10));
  CHECK(r.stages[0].inlet.F[0] == Approx(8.0).epsilon(1e-15));
  const double FA1 = r.stages[0].outlet.F[0];
  CHECK(r.stages[0].conversion == Approx(1 - FA1 / 8).epsilon(1e-14));
  CHECK(r.stages[1].outlet.F[0] == Approx(FA1 + 2).epsilon(1e-14));
  CHECK(r.stages[1].conversion == Approx(1 - (FA1 + 2) / 10).epsilon(1e-14));
  CHECK(r.stages[2].conversion == Approx(1 - r.stages[2].outlet.F[0] / 10).epsilon(1e-14));
  CHECK(r.stages[3].conversion == Approx(1 - r.stages[3].outlet.F[0] / 13).epsilon(1e-14));
  CHECK(r.conversion == Approx(1 - r.outlet.F[0] / 13).epsilon(1e-14));
  CHECK(r.stages[4].F_key_fed == Approx(13).epsilon(1e-15));
  // A quench steps the conversion down (the side stream brings unconverted key).
  CHECK(r.stages[1].conversion < r.stages[0].conversion);
  CHECK(r.stages[3].conversion < r.stages[2].conversion);
  // The Levenspiel curve of a bed after a quench is on that bed's basis:
  // its area is the bed's catalyst (0.3 m3 x 800 kg/m3).
  const TrainResult with_views = run_train(c, TrainOptions{});
  REQUIRE(with_views.levenspiel.size() == 3);
  CHECK(with_views.levenspiel[1].X_in == Approx(with_views.stages[1].conversion).epsilon(1e-14));
  CHECK(with_views.levenspiel[2].area == Approx(240.0).epsilon(1e-5));
  REQUIRE(r.stages[3].side_stream);
  CHECK(r.stages[3].side_stream->F[0] == 3.0);
  REQUIRE(r.stages[1].share);
  CHECK(*r.stages[1].share == 0.2);
}

TEST_CASE("a three-bed quench converter agrees with GSL doing the mixing itself", "[quench]") {
  // Beds: F_A, F_B, T along V, r = rho_b k(T) y_A P, dH(T) = dH_298 +
  // (2 cp_B - cp_A)(T - 298.15) (Kirchhoff), adiabatic. Quench: with
  // constant cp, sum F_i cp_i (T_mix - T) = 0 over both streams, so
  // T_mix = (C_main T_main + C_side T_side) / (C_main + C_side), C = sum F cp.
  GslNoAbort no_abort;
  // The inert's flow changes at each quench, so the test integrates each
  // bed with its own system; the first bed carries 0.6 of the feed.
  auto integrate_bed = [&](double FI, double V, std::vector<double>& y) {
    GslOde bed_ode(3, [&](double, const double* s, double* ds) {
      const double FA = s[0], FB = s[1], T = s[2];
      const double Ft = FA + FB + FI;
      const double k = k0 * std::exp(-Ea / kGasConstant * (1 / T - 1 / T0));
      const double r = rho_b * k * FA / Ft * P;
      const double dH = dH298 + (2 * kCpB - kCpA) * (T - kReferenceT);
      ds[0] = -r;
      ds[1] = 2 * r;
      ds[2] = -dH * r / (FA * kCpA + FB * kCpB + FI * kCpI);
    });
    bed_ode.advance(0, V, y);
  };
  const double V1 = 0.25, V2 = 0.35, V3 = 0.5, s1 = 0.25, s2 = 0.15, Tq = 420;
  const Case c = quench_case(
      {bed("B1", V1), share("Q1", s1, Tq), bed("B2", V2), share("Q2", s2, Tq), bed("B3", V3)});
  const TrainResult r = run_train(c, tight());
  // The test's own train.
  const double rest = 1 - s1 - s2;
  std::vector<double> y{10.0 * rest, 0.0, T0};
  double FI = 40 * rest;
  integrate_bed(FI, V1, y);
  CHECK(r.stages[0].outlet.T == Approx(y[2]).epsilon(1e-7));
  CHECK(r.stages[0].outlet.F[0] == Approx(y[0]).epsilon(1e-7));
  auto mix = [&](double x) {
    const double FA = 10 * x, FIs = 40 * x;
    const double C_main = y[0] * kCpA + y[1] * kCpB + FI * kCpI;
    const double C_side = FA * kCpA + FIs * kCpI;
    y[2] = (C_main * y[2] + C_side * Tq) / (C_main + C_side);
    y[0] += FA;
    FI += FIs;
  };
  mix(s1);
  CHECK(r.stages[1].outlet.T == Approx(y[2]).epsilon(1e-7));
  integrate_bed(FI, V2, y);
  CHECK(r.stages[2].outlet.T == Approx(y[2]).epsilon(1e-7));
  CHECK(r.stages[2].outlet.F[0] == Approx(y[0]).epsilon(1e-7));
  mix(s2);
  CHECK(r.stages[3].outlet.T == Approx(y[2]).epsilon(1e-7));
  integrate_bed(FI, V3, y);
  CHECK(r.outlet.T == Approx(y[2]).epsilon(1e-7));
  // Near complete conversion the outlet flow of A is a small difference:
  // it is compared on the scale of the key fed (10 mol/s), as X is.
  CHECK(std::abs(r.outlet.F[0] - y[0]) <= 1e-7 * 10.0);
  CHECK(r.outlet.F[2] == Approx(40.0).epsilon(1e-14));
  CHECK(std::abs(r.conversion - (1 - y[0] / 10)) <= 1e-7);
  // Each bed converts enough for the comparison to mean something.
  CHECK(r.stages[0].conversion > 0.2);
  CHECK(r.outlet.T > r.stages[3].outlet.T + 5);
}

TEST_CASE("a quench in a case file: a share, or a side stream with its own T, P and flows",
          "[quench]") {
  const std::string head = R"(title: t
phase: gas
species:
  - {id: A, formula: C4H10, thermo: {cp: 90 J/mol/K, h_f: 0 J/mol}}
  - {id: B, formula: C2H5, thermo: {cp: 40 J/mol/K, h_f: 0 J/mol}}
reactions:
  - id: R
    equation: A => 2 B
    rate: {per: volume, A: 1e-5 mol/(m3*s*Pa), Ea: 80 kJ/mol, T_ref: 600 K, driving: pressure, orders: {A: 1}}
    dH: -60 kJ/mol
feed: {T: 600 K, P: 5 bar, flows: {A: 10 mol/s}}
key: A
train:
  - {type: pfr, id: B1, volume: 1 m3}
)";
  UnitParser units;
  const Case c = load_case_from_string(
      head +
          "  - {type: quench, id: Q1, share: 0.25}\n"
          "  - {type: pfr, id: B2, volume: 1 m3}\n"
          "  - {type: quench, id: Q2, stream: {T: 40 degC, flows: {A: 3600 mol/h}}}\n"
          "  - {type: pfr, id: B3, volume: 1 m3}\n",
      "case.yaml", units);
  const auto& q1 = std::get<QuenchSpec>(c.train[1]);
  CHECK(*q1.share == 0.25);
  CHECK_FALSE(q1.T);  // the feed's
  const auto& q2 = std::get<QuenchSpec>(c.train[3]);
  REQUIRE(q2.stream);
  CHECK(q2.stream->T == Approx(313.15).epsilon(1e-14));
  CHECK(q2.stream->P == 5e5);  // default: the feed's
  CHECK(q2.stream->F[0] == Approx(1.0).epsilon(1e-14));
  CHECK(c.quench_shares() == 0.25);
  CHECK_NOTHROW(validate_case(c));
  const TrainResult r = run_train(c, TrainOptions{});
  CHECK(r.stages[0].inlet.F[0] == Approx(7.5).epsilon(1e-15));
  CHECK(r.stages[1].side_stream->T == 600);  // a share without T joins at the feed's
  CHECK(r.stages[4].F_key_fed == Approx(11.0).epsilon(1e-15));
  CHECK(r.conversion == Approx(1 - r.outlet.F[0] / 11.0).epsilon(1e-14));
  // A share and a stream together, or neither, are refused at the entry.
  auto fails = [&](const std::string& stage) {
    try {
      load_case_from_string(head + stage, "case.yaml", units);
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  CHECK_THAT(fails("  - {type: quench, id: Q1, share: 0.2, stream: {T: 300 K, flows: {A: 1 "
                   "mol/s}}}\n"),
             Catch::Contains("case.yaml:15:") && Catch::Contains("gives both share and stream"));
  CHECK_THAT(fails("  - {type: quench, id: Q1}\n"),
             Catch::Contains("case.yaml:15:") && Catch::Contains("needs share"));
}
