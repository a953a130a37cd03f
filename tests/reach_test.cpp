// What a stage can reach at any size (StageReach: pfr_reach, cstr_reach),
// and the sizing and refusals built on it, checked against GSL (odeiv2
// rk8pd, Brent roots, hybrids multiroots) integrating and solving the same
// beds and tanks with this file's own rate laws, heat capacities and
// balances, written from the case format (docs/case-format.md) and the
// plug-flow and stirred-tank balances (pfr.hpp, cstr.hpp). The cases are
// loaded from YAML text with the project's loader. All kinetic and
// physical data here are invented for the tests.
#include <fmt/format.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_multiroots.h>
#include <gsl/gsl_odeiv2.h>
#include <gsl/gsl_roots.h>

#include <array>
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <iomanip>
#include <memory>
#include <string>
#include <variant>
#include <vector>

#include "gsl_reference.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/chem/thermo.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/models/equilibrium.hpp"
#include "rxtrain/stages/cstr.hpp"
#include "rxtrain/stages/pfr.hpp"

using namespace rxtrain;
using rxtrain::test::gsl_brent;
using rxtrain::test::GslNoAbort;
using rxtrain::test::GslOde;

namespace {

// ---- GSL helpers (the independent solvers) ----------------------------------

using Equations = std::function<void(const double* x, double* f)>;

// Powell's hybrid method (GSL hybrids, finite-difference Jacobian) for
// f(x) = 0 from x; true when max |f| <= tol.
bool gsl_solve(const Equations& eqs, std::vector<double>& x, double tol) {
  const size_t n = x.size();
  gsl_multiroot_function fn;
  fn.f = [](const gsl_vector* v, void* p, gsl_vector* f) -> int {
    (*static_cast<const Equations*>(p))(v->data, f->data);
    for (size_t i = 0; i < f->size; ++i)
      if (!std::isfinite(gsl_vector_get(f, i))) return GSL_EDOM;
    return GSL_SUCCESS;
  };
  fn.n = n;
  fn.params = const_cast<Equations*>(&eqs);
  std::unique_ptr<gsl_vector, decltype(&gsl_vector_free)> x0(gsl_vector_alloc(n), &gsl_vector_free);
  for (size_t i = 0; i < n; ++i) gsl_vector_set(x0.get(), i, x[i]);
  std::unique_ptr<gsl_multiroot_fsolver, decltype(&gsl_multiroot_fsolver_free)> s(
      gsl_multiroot_fsolver_alloc(gsl_multiroot_fsolver_hybrids, n), &gsl_multiroot_fsolver_free);
  if (gsl_multiroot_fsolver_set(s.get(), &fn, x0.get()) != GSL_SUCCESS) return false;
  bool ok = false;
  for (int it = 0; it < 500 && !ok; ++it) {
    if (gsl_multiroot_fsolver_iterate(s.get()) != GSL_SUCCESS) break;
    ok = gsl_multiroot_test_residual(s->f, tol) == GSL_SUCCESS;
  }
  ok = ok || gsl_multiroot_test_residual(s->f, tol) == GSL_SUCCESS;
  for (size_t i = 0; i < n; ++i) x[i] = gsl_vector_get(s->x, i);
  return ok;
}

// ---- the methanation bed, written out independently -------------------------

// Species CO H2 CH4 H2O CO2 N2; cp = a + b T (J/(mol K), T in K) of the
// right size for these gases, invented; ideal gas at constant P.
// Reactions (rate per m3, concentration-driven, orders = the reactants'
// coefficients, k = k_ref exp(-Ea/R (1/T - 1/T_ref))):
//   meth:  CO + 3 H2 <=> CH4 + H2O   r = k C_CO C_H2^3 (1 - Q/K)
//   shift: CO + H2O  <=> CO2 + H2    r = k C_CO C_H2O (1 - Q/K)
// Q in activities p_i / 1 bar; ln K(T) = ln K_ref - dH_K/R (1/T - 1/T_K)
// (van 't Hoff); heat of reaction dH(T) = dH_298 + sum_i nu_i (hs_i(T))
// with hs_i the sensible enthalpy from 298.15 K (Kirchhoff).
constexpr int kGas = 6;
constexpr int kCO = 0;
using GasVector = std::array<double, kGas>;

struct GasReaction {
  GasVector nu;
  GasVector order;
  double k_ref, Ea, dH_298, K_ref, T_K, dH_K;
};

struct MethanationBed {
  GasVector a{28.0, 27.5, 19.0, 30.0, 29.0, 27.0};
  GasVector b{4.0e-3, 3.5e-3, 5.0e-2, 1.0e-2, 2.5e-2, 4.5e-3};
  std::vector<GasReaction> rx;
  double T_ref = 550, P = 10e5;
  GasVector F0{1.0, 3.5, 0.0, 5.0, 0.0, 8.0};  // mol/s
  double T0 = 520;                             // K

  double cp(int i, double T) const { return a[i] + b[i] * T; }
  double hs(int i, double T) const {
    const double T1 = kReferenceT;
    return a[i] * (T - T1) + b[i] / 2 * (T * T - T1 * T1);
  }
  double dH(const GasReaction& r, double T) const {
    double s = r.dH_298;
    for (int i = 0; i < kGas; ++i) s += r.nu[i] * hs(i, T);
    return s;
  }
  double ln_K(const GasReaction& r, double T) const {
    return std::log(r.K_ref) - r.dH_K / kGasConstant * (1 / T - 1 / r.T_K);
  }
  // ln Q of reaction r at flows F (activities p_i / 1 bar).
  double ln_Q(const GasReaction& r, const double* F) const {
    double Ft = 0;
    for (int i = 0; i < kGas; ++i) Ft += F[i];
    double s = 0;
    for (int i = 0; i < kGas; ++i)
      if (r.nu[i] != 0) s += r.nu[i] * std::log(F[i] / Ft * P / 1e5);
    return s;
  }
  double rate(const GasReaction& r, const double* F, double T) const {
    double Ft = 0;
    for (int i = 0; i < kGas; ++i) Ft += F[i];
    double drive = r.k_ref * std::exp(-r.Ea / kGasConstant * (1 / T - 1 / T_ref));
    for (int i = 0; i < kGas; ++i)
      if (r.order[i] != 0) drive *= std::pow(F[i] / Ft * P / (kGasConstant * T), r.order[i]);
    double Q = 1;  // as a product: an absent product gives Q = 0
    for (int i = 0; i < kGas; ++i)
      if (r.nu[i] != 0) Q *= std::pow(F[i] / Ft * P / 1e5, r.nu[i]);
    return drive * (1 - Q / std::exp(ln_K(r, T)));
  }
  // Adiabatic plug flow, y = [F, T]: dF_i/dV = sum_j nu_ij r_j,
  // dT/dV = -sum_j dH_j(T) r_j / sum_i F_i cp_i(T).
  void rhs(const double* y, double* dy) const {
    const double T = y[kGas];
    double heat = 0, flow_cp = 0;
    for (int i = 0; i < kGas; ++i) dy[i] = 0;
    for (const auto& r : rx) {
      const double rj = rate(r, y, T);
      for (int i = 0; i < kGas; ++i) dy[i] += r.nu[i] * rj;
      heat += dH(r, T) * rj;
    }
    for (int i = 0; i < kGas; ++i) flow_cp += y[i] * cp(i, T);
    dy[kGas] = -heat / flow_cp;
  }
  double X(const double* y) const { return 1 - y[kCO] / F0[kCO]; }
  double dX_dV(const double* y) const {
    std::array<double, kGas + 1> dy{};
    rhs(y, dy.data());
    return -dy[kCO] / F0[kCO];
  }
  // Total enthalpy kept (steady-flow first law, no work or heat):
  // sum_i F0_i (hs_i(T) - hs_i(T0)) + sum_j xi_j dH_j(T) = 0, in K.
  double energy_K(const std::vector<double>& xi, double T) const {
    double s = 0, flow_cp = 0;
    for (int i = 0; i < kGas; ++i) {
      s += F0[i] * (hs(i, T) - hs(i, T0));
      flow_cp += F0[i] * cp(i, T0);
    }
    for (std::size_t j = 0; j < rx.size(); ++j) s += xi[j] * dH(rx[j], T);
    return s / flow_cp;
  }
  GasVector flows(const std::vector<double>& xi) const {
    GasVector F = F0;
    for (std::size_t j = 0; j < rx.size(); ++j)
      for (int i = 0; i < kGas; ++i) F[i] += rx[j].nu[i] * xi[j];
    return F;
  }
  std::vector<double> inlet_state() const {
    std::vector<double> y(F0.begin(), F0.end());
    y.push_back(T0);
    return y;
  }
};

const GasReaction kMethanation{
    {-1, -3, 1, 1, 0, 0}, {1, 3, 0, 0, 0, 0}, 1.0e-7, 80e3, -206e3, 1.0e4, 600, -206e3};
const GasReaction kShift{
    {-1, 1, 0, -1, 1, 0}, {1, 0, 0, 1, 0, 0}, 0.1, 60e3, -41e3, 20, 600, -41e3};

// The same bed as a case file. The shift is fast and runs forward first;
// methanation, slower and far more exothermic, then heats the bed, and as it
// heats the shift runs back and gives CO back faster than methanation
// takes it: the CO conversion peaks near the inlet and falls towards the
// two-reaction adiabatic equilibrium.
const std::string kSpecies = R"(phase: gas
species:
  - {id: CO, formula: CO, thermo: {cp: {poly: [28.0, 4.0e-3]}}}
  - {id: H2, formula: H2, thermo: {cp: {poly: [27.5, 3.5e-3]}}}
  - {id: CH4, formula: CH4, thermo: {cp: {poly: [19.0, 5.0e-2]}}}
  - {id: H2O, formula: H2O, thermo: {cp: {poly: [30.0, 1.0e-2]}}}
  - {id: CO2, formula: CO2, thermo: {cp: {poly: [29.0, 2.5e-2]}}}
  - {id: N2, formula: N2, thermo: {cp: {poly: [27.0, 4.5e-3]}}}
)";
const std::string kMethanationYaml = R"(  - id: meth
    equation: CO + 3 H2 <=> CH4 + H2O
    rate: {A: 1.0e-7, Ea: 80 kJ/mol, T_ref: 550 K}
    dH: -206 kJ/mol
    equilibrium: {K: 1.0e4, T: 600 K, dH: -206 kJ/mol}
)";
const std::string kShiftYaml = R"(  - id: shift
    equation: CO + H2O <=> CO2 + H2
    rate: {A: 0.1, Ea: 60 kJ/mol, T_ref: 550 K}
    dH: -41 kJ/mol
    equilibrium: {K: 20, T: 600 K, dH: -41 kJ/mol}
)";
const std::string kFeed =
    "feed: {T: 520 K, P: 10 bar, flows: {CO: 1 mol/s, H2: 3.5 mol/s, H2O: 5 mol/s, N2: 8 "
    "mol/s}}\nkey: CO\n";

std::string methanation_case(bool with_shift, const std::string& stage) {
  return "title: methanation bed (invented data)\n" + kSpecies + "reactions:\n" + kMethanationYaml +
         (with_shift ? kShiftYaml : "") + kFeed + "train:\n  - " + stage + "\n";
}

Case load(const std::string& text) {
  const UnitParser units;
  return load_case_from_string(text, "reach.yaml", units);
}

// The first interior maximum of X along the GSL path (dX/dV from + to -),
// bisected by Brent on dX/dV, and the largest X the scan meets beyond it.
struct GslPeak {
  double V = 0, X = 0, T = 0;
  double X_after_max = 0;  // largest X on the scan past the peak
  std::vector<double> y_far;
};

GslPeak gsl_peak(const MethanationBed& bed, double V_far) {
  GslOde ode(
      kGas + 1, [&](const double* y, double* dy) { bed.rhs(y, dy); }, 1e-12, 1e-14);
  std::vector<double> y = bed.inlet_state();
  double V = 0;
  GslPeak p;
  bool found = false;
  std::vector<double> grid;
  for (double v = 1e-6; v < V_far; v *= 1.02) grid.push_back(v);
  grid.push_back(V_far);
  for (const double V_next : grid) {
    std::vector<double> y_prev = y;
    const double V_prev = V;
    ode.advance(V, V_next, y);
    V = V_next;
    if (!found && bed.dX_dV(y_prev.data()) > 0 && bed.dX_dV(y.data()) <= 0) {
      auto slope = [&](double at) {
        std::vector<double> z = y_prev;
        ode.advance(V_prev, at, z);
        return bed.dX_dV(z.data());
      };
      p.V = gsl_brent(slope, V_prev, V, 1e-13);
      std::vector<double> z = y_prev;
      ode.advance(V_prev, p.V, z);
      p.X = bed.X(z.data());
      p.T = z[kGas];
      found = true;
    } else if (found) {
      p.X_after_max = std::max(p.X_after_max, bed.X(y.data()));
    }
  }
  REQUIRE(found);
  p.y_far = y;
  return p;
}

// The first V where X reaches X_t along the GSL path, by Brent on X(V) - X_t.
double gsl_first_crossing(const MethanationBed& bed, double X_t) {
  GslOde ode(
      kGas + 1, [&](const double* y, double* dy) { bed.rhs(y, dy); }, 1e-12, 1e-14);
  std::vector<double> y = bed.inlet_state();
  double V = 0;
  for (double V_next = 1e-6; V_next < 1e3; V_next *= 1.02) {
    const std::vector<double> y_prev = y;
    const double V_prev = V;
    ode.advance(V, V_next, y);
    V = V_next;
    if (bed.X(y.data()) >= X_t) {
      return gsl_brent(
          [&](double at) {
            std::vector<double> z = y_prev;
            ode.advance(V_prev, at, z);
            return bed.X(z.data()) - X_t;
          },
          V_prev, V, 1e-14);
    }
  }
  FAIL("the GSL path never reaches the target");
  return 0;
}

}  // namespace

TEST_CASE("a methanation bed with the shift: its most is the peak inside the bed, not the end",
          "[reach]") {
  GslNoAbort no_abort;
  MethanationBed bed;
  bed.rx = {kMethanation, kShift};
  const Case c = load(
      methanation_case(true, "{type: pfr, id: M1, target: {conversion: 0.95}, heat: adiabatic}"));
  const ConversionBasis basis = c.conversion_basis();
  const ReactorSpec& spec = std::get<ReactorSpec>(c.train[0]);
  SunContext ctx;
  PfrWorkspace ws(ctx);
  const StageReach reach = pfr_reach(c.mechanism, spec, c.feed, basis, ws);

  // Reference 1: the peak of X on the GSL path (rk8pd, rtol 1e-12), where
  // dX/dV = 0, bisected by Brent to 1e-13 m3.
  const GslPeak peak = gsl_peak(bed, 60.0);
  INFO(std::setprecision(12) << "GSL peak X = " << peak.X << " at V = " << peak.V
                             << " m3, T = " << peak.T << " K");
  INFO(std::setprecision(12) << "pfr_reach X_max = " << reach.X_max
                             << " at T = " << reach.T_at_X_max << " K");
  REQUIRE(reach.V_at_X_max.has_value());
  INFO(std::setprecision(12) << "pfr_reach V_at_X_max = " << *reach.V_at_X_max);
  CHECK(reach.X_max == Approx(peak.X).margin(1e-6).epsilon(0));
  CHECK(*reach.V_at_X_max == Approx(peak.V).epsilon(5e-5));
  CHECK(reach.T_at_X_max == Approx(peak.T).margin(1e-4).epsilon(0));
  // The peak is the most anywhere on the path (the scan to 60 m3 never
  // passes it), and well above where the path ends.
  CHECK(peak.X_after_max <= peak.X + 1e-12);
  CHECK(bed.X(peak.y_far.data()) < peak.X - 0.01);

  // Reference 2: the two-reaction adiabatic equilibrium, by GSL hybrids on
  // ln Q_j = ln K_j(T) (j = 1, 2) and the energy balance, in (xi1, xi2, T),
  // started from the GSL path at V = 60 m3.
  const GasVector F_far{peak.y_far[0], peak.y_far[1], peak.y_far[2],
                        peak.y_far[3], peak.y_far[4], peak.y_far[5]};
  std::vector<double> x{F_far[2], F_far[4], peak.y_far[kGas]};  // CH4, CO2 made
  const bool solved = gsl_solve(
      [&](const double* v, double* f) {
        const std::vector<double> xi{v[0], v[1]};
        const GasVector F = bed.flows(xi);
        f[0] = bed.ln_Q(kMethanation, F.data()) - bed.ln_K(kMethanation, v[2]);
        f[1] = bed.ln_Q(kShift, F.data()) - bed.ln_K(kShift, v[2]);
        f[2] = bed.energy_K(xi, v[2]);
      },
      x, 1e-13);
  REQUIRE(solved);
  const double X_eq = (x[0] + x[1]) / bed.F0[kCO];
  const double T_eq = x[2];
  INFO(std::setprecision(12) << "GSL adiabatic equilibrium X = " << X_eq << ", T = " << T_eq
                             << " K");
  INFO(std::setprecision(12) << "pfr_reach X_end = " << reach.X_end << ", T_end = " << reach.T_end
                             << " K");
  // The GSL path itself has arrived there by 60 m3.
  CHECK(bed.X(peak.y_far.data()) == Approx(X_eq).margin(1e-8).epsilon(0));
  CHECK(reach.end == ReachEnd::Equilibrium);
  CHECK(reach.X_end == Approx(X_eq).margin(1e-6).epsilon(0));
  CHECK(reach.T_end == Approx(T_eq).margin(1e-4).epsilon(0));
  CHECK(reach.peak_inside());
  CHECK(X_eq < peak.X - 0.01);

  SECTION("a target between the end point and the peak: the first crossing, and a warning") {
    const TrainResult res = run_train(c);
    REQUIRE(res.stages.size() == 1);
    const StageResult& s = res.stages[0];
    const double V_gsl = gsl_first_crossing(bed, 0.95);
    INFO(std::setprecision(12) << "run_train V = " << *s.volume
                               << " m3, GSL first crossing V = " << V_gsl << " m3");
    CHECK(*s.volume == Approx(V_gsl).epsilon(1e-6));
    CHECK(s.conversion == Approx(0.95).margin(1e-8).epsilon(0));
    CHECK(*s.volume < peak.V);
    REQUIRE(s.reach.has_value());
    CHECK(s.reach->X_max == Approx(peak.X).margin(1e-6).epsilon(0));
    bool told = false;
    for (const auto& w : res.warnings)
      told =
          told || (w.find(fmt::format("raises X only up to {:.4f}", peak.X)) != std::string::npos &&
                   w.find("gives conversion back") != std::string::npos &&
                   w.find(fmt::format("towards X = {:.4f}", X_eq)) != std::string::npos);
    std::string all;
    for (const auto& w : res.warnings) all += w + " | ";
    INFO("warnings: " << all);
    CHECK(told);
  }

  SECTION("a target above the peak is refused quoting the peak, not the end point") {
    const Case c2 = load(
        methanation_case(true, "{type: pfr, id: M1, target: {conversion: 0.96}, heat: adiabatic}"));
    std::string what;
    try {
      run_train(c2);
    } catch (const InfeasibleError& e) {
      what = e.what();
    }
    INFO("message: " << what);
    REQUIRE_FALSE(what.empty());
    CHECK(what.find(fmt::format("the most this stage can reach is X = {:.4f}", peak.X)) !=
          std::string::npos);
    CHECK(what.find("(at V = ") != std::string::npos);  // where the peak lies
    CHECK(what.find(fmt::format("{:.2f} °C / {:.2f} K)", peak.T - 273.15, peak.T)) !=
          std::string::npos);
    CHECK(what.find(fmt::format("can reach is X = {:.4f}", X_eq)) == std::string::npos);
    CHECK(what.find(fmt::format("gives conversion back, to X = {:.4f}", X_eq)) !=
          std::string::npos);
    CHECK(what.find("reach.yaml:") == 0);
  }
}

TEST_CASE("one reaction: the most a bed can reach is its adiabatic equilibrium point", "[reach]") {
  GslNoAbort no_abort;
  MethanationBed bed;
  bed.rx = {kMethanation};
  const Case c =
      load(methanation_case(false, "{type: pfr, id: M1, volume: 1 m3, heat: adiabatic}"));
  const ConversionBasis basis = c.conversion_basis();
  const ReactorSpec& spec = std::get<ReactorSpec>(c.train[0]);
  SunContext ctx;
  PfrWorkspace ws(ctx);
  const StageReach reach = pfr_reach(c.mechanism, spec, c.feed, basis, ws);
  const auto ad = adiabatic_equilibrium(c.mechanism, c.feed, HeatMode::Adiabatic, basis);
  REQUIRE(ad.has_value());

  // Independent: the adiabatic energy balance E(T) = 0 by Brent in T, with
  // the equilibrium extent at each T by Brent on ln Q(xi) = ln K(T) inside
  // (0, xi_max): CO and H2 bound the extent, CH4 is absent at the inlet.
  const double xi_max = std::min(bed.F0[0], bed.F0[1] / 3);
  auto xi_eq = [&](double T) {
    return gsl_brent(
        [&](double xi) {
          const GasVector F = bed.flows({xi});
          return bed.ln_Q(kMethanation, F.data()) - bed.ln_K(kMethanation, T);
        },
        xi_max * 1e-14, xi_max * (1 - 1e-14), 1e-16);
  };
  const double T_eq =
      gsl_brent([&](double T) { return bed.energy_K({xi_eq(T)}, T); }, bed.T0, 1500.0, 1e-11);
  const double X_eq = xi_eq(T_eq) / bed.F0[kCO];
  INFO(std::setprecision(12) << "GSL X_ad_eq = " << X_eq << " at T = " << T_eq
                             << " K; adiabatic_equilibrium X = " << ad->X << " at " << ad->stream.T
                             << " K; pfr_reach X_max = " << reach.X_max);
  CHECK(ad->X == Approx(X_eq).margin(1e-9).epsilon(0));
  CHECK(ad->stream.T == Approx(T_eq).margin(1e-6).epsilon(0));
  CHECK(reach.X_max == Approx(ad->X).margin(1e-9).epsilon(0));
  CHECK(reach.X_max == Approx(X_eq).margin(1e-9).epsilon(0));
  CHECK(reach.T_at_X_max == Approx(T_eq).margin(1e-6).epsilon(0));
  CHECK(reach.X_end == reach.X_max);
  CHECK_FALSE(reach.V_at_X_max.has_value());
  CHECK_FALSE(reach.peak_inside());
  CHECK(reach.end == ReachEnd::Equilibrium);
}

namespace {

// Liquid series reactions at constant T, written out independently:
// A + B -> P (r1 = k1 C_A C_B), P + B -> Q (r2 = k2 C_P C_B), per m3;
// molar masses 0.1, 0.1, 0.2, 0.3 kg/mol at one density, so that the
// volumetric flow v = sum_i F_i mw_i / rho stays that of the feed.
struct SeriesLiquid {
  double k1 = 2.0e-6, k2 = 1.0e-6;  // m3/(mol s)
  std::array<double, 4> mw{0.1, 0.1, 0.2, 0.3};
  double rho = 1000;
  double v(const double* F) const {
    double s = 0;
    for (int i = 0; i < 4; ++i) s += F[i] * mw[i] / rho;
    return s;
  }
};

const char* kSeriesCase = R"(title: series reactions, tube then tank (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3, thermo: {cp: 150 J/mol/K}}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3, thermo: {cp: 150 J/mol/K}}
  - {id: P, mw: 0.2 kg/mol, density: 1000 kg/m3, thermo: {cp: 300 J/mol/K}}
  - {id: Q, mw: 0.3 kg/mol, density: 1000 kg/m3, thermo: {cp: 450 J/mol/K}}
reactions:
  - id: r1
    equation: A + B => P
    rate: {A: 2.0e-6, Ea: 0}
    dH: -50 kJ/mol
  - id: r2
    equation: P + B => Q
    rate: {A: 1.0e-6, Ea: 0}
    dH: -40 kJ/mol
feed: {T: 320 K, P: 2 bar, flows: {A: 1 mol/s, B: 1.2 mol/s}}
key: A
train:
  - {type: pfr, id: T1, volume: 0.012 m3, heat: isothermal}
  - {type: cstr, id: T2, TANK, heat: isothermal}
)";

std::string series_case(const std::string& tank) {
  std::string text = kSeriesCase;
  const std::string mark = "TANK";
  return text.replace(text.find(mark), mark.size(), tank);
}

}  // namespace

TEST_CASE("a stirred tank's reach is the tank's own, and its refusal says B is used up",
          "[reach]") {
  GslNoAbort no_abort;
  const SeriesLiquid sys;
  const Case rated = load(series_case("volume: 1 m3"));
  const TrainResult res = run_train(rated);
  REQUIRE(res.stages.size() == 2);
  const Stream& inlet = res.stages[1].inlet;  // the tube's outlet
  const double F_A_feed = rated.feed.F[0];

  // The tube's outlet itself against GSL (rk8pd on dF/dV = nu r, 0.012 m3).
  {
    GslOde tube(
        4,
        [&](const double* F, double* dF) {
          const double vv = sys.v(F);
          const double r1 = sys.k1 * F[0] / vv * F[1] / vv;
          const double r2 = sys.k2 * F[2] / vv * F[1] / vv;
          dF[0] = -r1;
          dF[1] = -r1 - r2;
          dF[2] = r1 - r2;
          dF[3] = r2;
        },
        1e-12, 1e-15);
    std::vector<double> F(rated.feed.F.begin(), rated.feed.F.end());
    tube.advance(0, 0.012, F);
    for (int i = 0; i < 4; ++i) CHECK(inlet.F[i] == Approx(F[i]).margin(1e-8).epsilon(0));
  }

  const ConversionBasis basis = rated.conversion_basis();
  ReactorSpec spec = std::get<ReactorSpec>(rated.train[1]);
  SunContext ctx;
  CstrWorkspace ws(ctx);
  const StageReach reach = cstr_reach(rated.mechanism, spec, inlet, basis, ws);

  // Independent scan of the tank's steady states as V grows, up to the
  // same largest volume (PfrOptions::max_space_time times the inlet's
  // volumetric flow): GSL hybrids on the balances in (xi1, ln F_B),
  //   xi1 = V k1 C_A C_B,   xi2 = F_B,in - xi1 - F_B = V k2 C_P C_B,
  // each volume started from the one before (growing by 10 % a step).
  const double v_in = sys.v(inlet.F.data());
  const double V_end = PfrOptions{}.max_space_time * v_in;
  const double A_in = inlet.F[0], B_in = inlet.F[1], P_in = inlet.F[2];
  std::vector<double> x{0.0, std::log(B_in)};
  double X_scan = basis.conversion(inlet);
  double F_B_end = 0;
  for (double V = 1e-3 * v_in;; V = std::min(V * 1.1, V_end)) {
    const bool ok = gsl_solve(
        [&](const double* u, double* f) {
          const double xi1 = u[0], F_B = std::exp(u[1]);
          const double xi2 = B_in - xi1 - F_B;
          const double C_A = (A_in - xi1) / v_in, C_B = F_B / v_in, C_P = (P_in + xi1 - xi2) / v_in;
          f[0] = (xi1 - V * sys.k1 * C_A * C_B) / B_in;
          f[1] = (xi2 - V * sys.k2 * C_P * C_B) / B_in;
        },
        x, 1e-14);
    INFO("tank scan at V = " << V << " m3");
    REQUIRE(ok);
    X_scan = std::max(X_scan, 1 - (A_in - x[0]) / F_A_feed);
    F_B_end = std::exp(x[1]);
    if (V == V_end) break;
  }
  // Where the tank tends: B used up (xi1 + xi2 = F_B,in) with the extents
  // in the ratio of the rates, xi2 / xi1 = k2 C_P / (k1 C_A).
  const double xi1_lim = gsl_brent(
      [&](double xi1) {
        const double xi2 = B_in - xi1;
        return xi2 * sys.k1 * (A_in - xi1) - xi1 * sys.k2 * (P_in + xi1 - xi2);
      },
      0, std::min(A_in, B_in), 1e-15);
  const double X_tank_limit = 1 - (A_in - xi1_lim) / F_A_feed;

  // The plug-flow path from the same inlet: dxi2/dxi1 = r2 / r1 =
  // k2 F_P / (k1 F_A), until B is used up (xi1 + xi2 = F_B,in).
  double X_pfr = 0;
  {
    // y = [xi1, xi2] along t = xi1.
    GslOde along(
        2,
        [&](const double* y, double* dy) {
          dy[0] = 1;
          dy[1] = sys.k2 * (P_in + y[0] - y[1]) / (sys.k1 * (A_in - y[0]));
        },
        1e-13, 1e-15);
    std::vector<double> y{0, 0};
    double t = 0;
    const double dt = 1e-3;
    while (B_in - y[0] - y[1] > 0) {
      const std::vector<double> y_prev = y;
      const double t_prev = t;
      along.advance(t, t + dt, y);
      t += dt;
      if (B_in - y[0] - y[1] <= 0) {
        const double xi1 = gsl_brent(
            [&](double at) {
              std::vector<double> z = y_prev;
              along.advance(t_prev, at, z);
              return B_in - z[0] - z[1];
            },
            t_prev, t, 1e-14);
        X_pfr = 1 - (A_in - xi1) / F_A_feed;
      }
    }
  }
  // The same path in closed form: with a = F_A, dF_P/dF_A = -1 + kappa F_P / F_A
  // (kappa = k2 / k1) is linear, F_P = C a^kappa - a / (1 - kappa); B used is
  // 2 (A_in - a) - (F_P - P_in).
  const double kappa = sys.k2 / sys.k1;
  const double C = (P_in + A_in / (1 - kappa)) / std::pow(A_in, kappa);
  const double a_end = gsl_brent(
      [&](double a) {
        const double F_P = C * std::pow(a, kappa) - a / (1 - kappa);
        return 2 * (A_in - a) - (F_P - P_in) - B_in;
      },
      1e-9 * A_in, A_in, 1e-15);
  CHECK(X_pfr == Approx(1 - a_end / F_A_feed).margin(1e-8).epsilon(0));
  INFO(std::setprecision(12) << "cstr_reach X_max = " << reach.X_max
                             << "; GSL scan max X = " << X_scan << " (F_B left " << F_B_end
                             << " mol/s); tank limit X = " << X_tank_limit
                             << "; plug-flow path X = " << X_pfr);
  CHECK(reach.X_max == Approx(X_scan).margin(1e-5).epsilon(0));
  CHECK(reach.X_max == Approx(X_tank_limit).margin(1e-4).epsilon(0));
  CHECK(X_pfr > X_tank_limit + 0.02);
  CHECK(reach.end == ReachEnd::ReactantUsedUp);
  CHECK(reach.species == 1);
  REQUIRE(res.stages[1].reach.has_value());
  CHECK(res.stages[1].reach->X_max == Approx(reach.X_max).margin(1e-12).epsilon(0));

  // Asked for a conversion the plug-flow path could reach but the tank
  // cannot: refused quoting the tank's reach and its cause.
  const double X_t = 0.5 * (X_tank_limit + X_pfr);
  const Case sized = load(series_case(fmt::format("target: {{conversion: {:.4f}}}", X_t)));
  std::string what;
  try {
    run_train(sized);
  } catch (const InfeasibleError& e) {
    what = e.what();
  }
  INFO("message: " << what);
  REQUIRE_FALSE(what.empty());
  CHECK(what.find(fmt::format("the most this stage can reach is X = {:.4f}", X_scan)) !=
        std::string::npos);
  CHECK(what.find("B used up") != std::string::npos);
  CHECK(what.find(fmt::format("{:.4f}", X_pfr)) == std::string::npos);
  CHECK(what.find("equilibrium") == std::string::npos);
  CHECK(what.find("stage T2") != std::string::npos);
}
