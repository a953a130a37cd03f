// The sparse (KLU) form of the tubular stage's Jacobian, the reusable
// solver workspace and the synthetic benchmark mechanisms. References:
// central differences of the right-hand side (second-order accurate
// numerical differentiation), the dense solver, and a fresh run.
// All kinetic and physical data here are invented for the tests.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <thread>
#include <vector>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/case/synthetic_case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "test_species.hpp"

using namespace rxtrain;

namespace {

using rxtrain::test::make_species;

// Invented mechanism over A, B, C, D, E, I touching every branch of the
// rate law: reversible with fractional and product orders and a van 't Hoff
// K, pressure driving on a per-catalyst basis, K from the species' thermo.
Mechanism mixed_mechanism(Phase phase) {
  std::vector<Species> sp{
      make_species("A", 35.0, -50e3, 200.0, 0.030, 800.0),
      make_species("B", 29.0, 0.0, 130.0, 0.002, 70.0),
      make_species("C", 60.0, -90e3, 260.0, 0.032, 790.0),
      make_species("D", 75.0, -120e3, 300.0, 0.060, 900.0),
      make_species("E", 50.0, -70e3, 240.0, 0.030, 850.0),
      make_species("I", 29.1, 0.0, 191.6, 0.028, 808.0),
  };
  auto reaction = [](const std::string& id, std::vector<double> nu, std::vector<double> orders) {
    Reaction r;
    r.id = id;
    r.equation = id;
    r.nu = std::move(nu);
    r.rate.orders = std::move(orders);
    return r;
  };
  Reaction r1 = reaction("R1", {-1, -1, 1, 0, 0, 0}, {1.0, 0.5, 0.3, 0, 0, 0});
  r1.reversible = true;
  r1.rate.A = 2.0e3;
  r1.rate.Ea = 45e3;
  r1.equilibrium.kind = EquilibriumSource::Kind::VantHoff;
  r1.equilibrium.K_ref = 25.0;
  r1.equilibrium.T_ref = 500.0;
  r1.equilibrium.dH = -40e3;
  r1.dH_298 = -40e3;
  Reaction r2 = reaction("R2", {0, 0, -1, 1, 0, 0}, {0, 0, 1.3, 0, 0, 0});
  r2.rate.A = 1e-4;
  r2.rate.Ea = 60e3;
  r2.rate.T_ref = 550.0;
  r2.rate.driving = Driving::Pressure;
  r2.rate.basis = RateBasis::Catalyst;
  r2.dH_298 = -30e3;
  Reaction r3 = reaction("R3", {0, 0, 0, -1, 1, 0}, {0, 0, 0, 1.0, 0.7, 0});
  r3.reversible = true;
  r3.rate.A = 5.0;
  r3.rate.Ea = 50e3;
  r3.equilibrium.kind = EquilibriumSource::Kind::Thermo;
  r3.dH_298 = 50e3;
  return Mechanism(phase, std::move(sp), {r1, r2, r3});
}

// Central differences of f = rhs(y), column-major (n+2)^2, with a step
// relative to each state's size.
std::vector<double> central_differences(const Mechanism& mech, const std::vector<double>& beta,
                                        HeatMode heat, double P, const std::vector<double>& y) {
  const int N = static_cast<int>(y.size());
  std::vector<double> J(static_cast<std::size_t>(N) * N), f_plus, f_minus, Jd, Js;
  for (int k = 0; k < N; ++k) {
    const double h = 1e-6 * std::max(std::abs(y[k]), 1.0);
    std::vector<double> yp = y, ym = y;
    yp[k] += h;
    ym[k] -= h;
    detail::pfr_jacobians(mech, beta, heat, P, yp, f_plus, Jd, Js);
    detail::pfr_jacobians(mech, beta, heat, P, ym, f_minus, Jd, Js);
    for (int i = 0; i < N; ++i) J[i + N * k] = (f_plus[i] - f_minus[i]) / (2 * h);
  }
  return J;
}

// Sparse (S + u w^T) against the dense analytic form and central differences.
void check_sparse_jacobian(const Mechanism& mech, const std::vector<double>& beta, HeatMode heat,
                           double P, const std::vector<double>& y) {
  std::vector<double> f, Jd, Js;
  detail::pfr_jacobians(mech, beta, heat, P, y, f, Jd, Js);
  const std::vector<double> Jfd = central_differences(mech, beta, heat, P, y);
  const int N = static_cast<int>(y.size());
  // Column scale: the largest entry of each column of the differences.
  for (int k = 0; k < N; ++k) {
    double col = 0;
    for (int i = 0; i < N; ++i) col = std::max(col, std::abs(Jfd[i + N * k]));
    for (int i = 0; i < N; ++i) {
      INFO("entry (" << i << ", " << k << ")");
      const double s = Js[i + N * k];
      // Same function, different summation order: rounding only.
      CHECK(s == Approx(Jd[i + N * k]).epsilon(1e-10).margin(1e-12 * col));
      // Central differences are good to O(h^2) plus rounding ~1e-10.
      CHECK(s == Approx(Jfd[i + N * k]).epsilon(1e-5).margin(1e-6 * col));
    }
  }
}

}  // namespace

TEST_CASE("sparse tubular-stage Jacobian equals central differences (gas)", "[sparse]") {
  const Mechanism mech = mixed_mechanism(Phase::Gas);
  const std::vector<double> beta{1.0, 750.0, 1.0};
  const std::vector<double> y{3.0, 2.0, 1.5, 0.7, 0.4, 5.0, 620.0, 0.0};
  check_sparse_jacobian(mech, beta, HeatMode::Adiabatic, 2.0e5, y);
  check_sparse_jacobian(mech, beta, HeatMode::Isothermal, 2.0e5, y);
}

TEST_CASE("sparse tubular-stage Jacobian equals central differences (liquid)", "[sparse]") {
  const Mechanism mech = mixed_mechanism(Phase::Liquid);
  const std::vector<double> beta{1.0, 750.0, 1.0};
  const std::vector<double> y{3.0, 2.0, 1.5, 0.7, 0.4, 5.0, 420.0, 0.0};
  check_sparse_jacobian(mech, beta, HeatMode::Adiabatic, 5.0e5, y);
  check_sparse_jacobian(mech, beta, HeatMode::Isothermal, 5.0e5, y);
}

TEST_CASE("sparse Jacobian of a synthetic mechanism equals central differences", "[sparse]") {
  const Case c = synthetic_case(12, 24, 7);
  std::vector<double> y = c.feed.F;
  // A state part-way down the bed: every species present.
  for (std::size_t i = 0; i < y.size(); ++i) y[i] = y[i] * 0.6 + 0.4 * (1.0 + 0.1 * i);
  y.push_back(640.0);
  y.push_back(0.0);
  check_sparse_jacobian(c.mechanism, std::vector<double>(c.mechanism.n_reactions(), 1.0),
                        HeatMode::Adiabatic, c.feed.P, y);
}

TEST_CASE("sparse and dense solvers give the same outlet", "[sparse]") {
  const Case c = synthetic_case(60, 120);
  TrainOptions dense, sparse;
  dense.equilibrium_views = sparse.equilibrium_views = false;
  dense.solvers.tube.jacobian = JacobianForm::Dense;
  sparse.solvers.tube.jacobian = JacobianForm::Sparse;
  const TrainResult rd = run_train(c, dense);
  const TrainResult rs = run_train(c, sparse);
  // Both integrate at rtol 1e-8 with the same exact Jacobian; the LU and KLU
  // factorizations differ only by rounding, far below the tolerance.
  const double Ft = rd.outlet.total_flow();
  CHECK(rs.outlet.T == Approx(rd.outlet.T).epsilon(1e-9));
  for (std::size_t i = 0; i < rd.outlet.F.size(); ++i)
    CHECK(rs.outlet.F[i] == Approx(rd.outlet.F[i]).margin(1e-9 * Ft));
  // The bed does something: the key species reacts and T rises.
  CHECK(rd.conversion > 0.3);
  CHECK(rd.outlet.T > c.feed.T + 5);
}

TEST_CASE("the automatic choice uses the sparse solver from the documented size up", "[sparse]") {
  PfrOptions o;
  CHECK_FALSE(uses_sparse_jacobian(o, kSparseJacobianMinSpecies - 1));
  CHECK(uses_sparse_jacobian(o, kSparseJacobianMinSpecies));
  o.jacobian = JacobianForm::Dense;
  CHECK_FALSE(uses_sparse_jacobian(o, 500));
  o.jacobian = JacobianForm::Sparse;
  CHECK(uses_sparse_jacobian(o, 2));
}

TEST_CASE("SparsePattern::validate refuses a pattern without its diagonal", "[sparse]") {
  SparsePattern p;
  p.n = 2;
  p.col_start = {0, 2, 3};
  p.row = {0, 1, 0};  // column 1 lacks row 1
  CHECK(p.validate() == "every diagonal entry must be in the pattern");
  p.row = {0, 1, 1};
  CHECK(p.validate().empty());
}

namespace {

const char* kThreeBed = RXTRAIN_SOURCE_DIR "/cases/so2-three-bed-converter.yaml";
const char* kFiveSpecies = RXTRAIN_SOURCE_DIR "/tools/bench-cases/five-species-two-step.yaml";

void require_same(const TrainResult& a, const TrainResult& b) {
  REQUIRE(a.stages.size() == b.stages.size());
  for (std::size_t s = 0; s < a.stages.size(); ++s) {
    INFO("stage " << a.stages[s].id);
    CHECK(a.stages[s].outlet.T == b.stages[s].outlet.T);
    CHECK(a.stages[s].outlet.F == b.stages[s].outlet.F);
    CHECK(a.stages[s].stats.steps == b.stages[s].stats.steps);
    CHECK(a.stages[s].stats.rhs_evals == b.stages[s].stats.rhs_evals);
    CHECK(a.stages[s].stats.jac_evals == b.stages[s].stats.jac_evals);
    CHECK(a.stages[s].profile.size() == b.stages[s].profile.size());
  }
}

}  // namespace

TEST_CASE("a reused TrainWorkspace gives the results of fresh runs", "[sparse][workspace]") {
  const UnitParser units;
  const Case three = load_case(kThreeBed, units);
  const Case five = load_case(kFiveSpecies, units);
  const Case big = synthetic_case(50, 100);
  TrainOptions o;
  o.equilibrium_views = false;
  const TrainResult fresh3 = run_train(three, o);
  const TrainResult fresh5 = run_train(five, o);
  const TrainResult fresh_big = run_train(big, o);
  TrainWorkspace ws;
  // Re-initialized, not re-created, between runs; switching cases of other
  // sizes and solvers in between must not leak state from one to the next.
  for (int k = 0; k < 2; ++k) {
    require_same(run_train(three, o, ws), fresh3);
    require_same(run_train(five, o, ws), fresh5);
    require_same(run_train(big, o, ws), fresh_big);
  }
}

TEST_CASE("workspaces on two threads give the single-thread results", "[sparse][workspace]") {
  const UnitParser units;
  const Case three = load_case(kThreeBed, units);
  TrainOptions o;
  o.equilibrium_views = false;
  const TrainResult reference = run_train(three, o);
  std::vector<TrainResult> results(6);
  auto worker = [&](int first) {
    TrainWorkspace ws;
    for (int k = first; k < first + 3; ++k) results[k] = run_train(three, o, ws);
  };
  std::thread a(worker, 0), b(worker, 3);
  a.join();
  b.join();
  for (const auto& r : results) require_same(r, reference);
}

TEST_CASE("synthetic mechanisms are balanced, sized and react", "[sparse]") {
  for (const auto& [n, nr] : {std::pair{10, 20}, std::pair{50, 100}, std::pair{200, 400}}) {
    const Case c = synthetic_case(n, nr);
    const Mechanism& m = c.mechanism;
    REQUIRE(m.n_species() == n);
    REQUIRE(m.n_reactions() == nr);
    std::vector<double> r(nr);
    m.rates(c.feed.T, c.feed.P, c.feed.F.data(), r.data());
    for (int j = 0; j < nr; ++j) {
      double moles = 0;
      for (double nu : m.reactions()[j].nu) moles += nu;
      CHECK(moles == 0);                   // isomers: atoms and moles balance
      CHECK(r[j] > 0);                     // every species is fed, so every rate is positive
      CHECK(m.reactions()[j].dH_298 < 0);  // products are more stable
    }
  }
  // Deterministic: the same seed gives the same mechanism.
  CHECK(synthetic_case(10, 20).mechanism.reactions()[5].equation ==
        synthetic_case(10, 20).mechanism.reactions()[5].equation);
}

TEST_CASE("outlet-only integration gives the numbers of the full profile", "[pfr][workspace]") {
  // PfrOptions::full_profile = false (sweeps) must change what is kept,
  // not what is computed: same steps, same outlet, T_max, volume.
  const UnitParser units;
  for (const char* name :
       {"cases/so2-three-bed-converter.yaml", "cases/three-bed-optimize.yaml",
        "cases/isomerization-two-bed.yaml", "cases/liquid-tank-then-tube.yaml",
        "cases/benzene-hydrogenation-bed.yaml", "cases/so2-oxidation-staging.yaml",
        "tools/bench-cases/five-species-two-step.yaml"}) {
    INFO(name);
    const Case c = load_case(std::string(RXTRAIN_SOURCE_DIR "/") + name, units);
    TrainOptions full, lean;
    full.equilibrium_views = lean.equilibrium_views = false;
    lean.solvers.tube.full_profile = false;
    TrainWorkspace ws;
    const TrainResult a = run_train(c, full, ws);
    const TrainResult b = run_train(c, lean, ws);
    REQUIRE(a.stages.size() == b.stages.size());
    CHECK(a.conversion == b.conversion);
    CHECK(a.outlet.T == b.outlet.T);
    CHECK(a.outlet.F == b.outlet.F);
    for (std::size_t k = 0; k < a.stages.size(); ++k) {
      const StageResult& s = a.stages[k];
      const StageResult& t = b.stages[k];
      INFO("stage " << s.id);
      CHECK(s.volume == t.volume);
      // Near equilibrium the steps of the full profile can overshoot the
      // monotonic outlet temperature by round-off of the integration (seen:
      // 9e-7 K at 897 K), so the extremes agree to rtol (1e-8), not bits.
      CHECK(s.T_max == Approx(t.T_max).epsilon(full.solvers.tube.cvode.rtol));
      CHECK(s.T_min == Approx(t.T_min).epsilon(full.solvers.tube.cvode.rtol));
      CHECK(s.conversion == t.conversion);
      CHECK(s.stats.steps == t.stats.steps);
      CHECK(t.profile.size() <= s.profile.size());
      if (s.kind == StageKind::Pfr && s.profile.size() > 2) CHECK(t.profile.size() >= 2);
    }
  }
}
