// Sizing a bed close to what it can reach: the volume must stay within the
// tolerance asked however close the target lies to the adiabatic
// equilibrium conversion, where dV/dX grows without bound.
//
// Reference: the plug-flow design equation V = F_key,0 ∫ dX / (-nu_key R)
// (any reactor-design text) along the adiabatic line, evaluated here
// independently with GSL: the equilibrium end point by Brent's method
// (gsl_root_fsolver_brent) and the integral by adaptive Gauss-Kronrod
// (gsl_integration_qag) in u = -ln(X_eq - X), where the integrand is smooth.
#include <fmt/format.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_roots.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"

namespace {

// An ammonia-like synthesis bed (invented data): N2 + 3 H2 <=> 2 NH3 with
// an inert, adiabatic. The heat capacities make delta cp = 0 (2 x 60 =
// 30 + 3 x 30), so dH is constant and the adiabatic line is exactly
// T = T_in + (-dH) F_N2,0 X / sum F_in cp.
constexpr double kTin = 660.0;                      // K
constexpr double kP = 150e5;                        // Pa
constexpr double kFN2 = 25.0;                       // mol/s
constexpr double kFH2 = 75.0;                       // mol/s
constexpr double kFAr = 10.0;                       // mol/s
constexpr double kFNH3 = 2.0;                       // mol/s
constexpr double kCp[] = {30.0, 30.0, 60.0, 21.0};  // N2, H2, NH3, Ar (J/mol/K)
constexpr double kDH = -92e3;                       // J/mol
constexpr double kA = 2.0e-3;                       // mol/(m3 s bar^2) at kTref
constexpr double kEa = 80e3;                        // J/mol
constexpr double kTref = 700.0;                     // K
constexpr double kK = 1.5e-5;                       // at kTK, activity basis (1 bar)
constexpr double kTK = 700.0;                       // K
constexpr double kR = 8.31446261815324;             // J/(mol K), exact in the 2019 SI (N_A k)

const std::string kCase = R"(title: ammonia-like bed sized near equilibrium (invented data)
phase: gas
species:
  - {id: N2, thermo: {cp: 30 J/mol/K}}
  - {id: H2, thermo: {cp: 30 J/mol/K}}
  - {id: NH3, thermo: {cp: 60 J/mol/K}}
  - {id: Ar, thermo: {cp: 21 J/mol/K}}
reactions:
  - id: synthesis
    equation: N2 + 3 H2 <=> 2 NH3
    rate: {A: 2.0e-3 mol/(m3*s*bar^2), Ea: 80 kJ/mol, T_ref: 700 K, driving: pressure, orders: {N2: 1, H2: 1}}
    dH: -92 kJ/mol
    equilibrium: {K: 1.5e-5, T: 700 K, dH: -92 kJ/mol}
feed: {T: 660 K, P: 150 bar, flows: {N2: 25 mol/s, H2: 75 mol/s, NH3: 2 mol/s, Ar: 10 mol/s}}
key: N2
train:
  - {type: pfr, id: R1, target: {conversion: TARGET}}
)";

struct State {
  double T;
  double F[4];
};

State at(double X) {
  const double xi = X * kFN2;
  State s;
  s.F[0] = kFN2 - xi;
  s.F[1] = kFH2 - 3 * xi;
  s.F[2] = kFNH3 + 2 * xi;
  s.F[3] = kFAr;
  const double Cp = kFN2 * kCp[0] + kFH2 * kCp[1] + kFNH3 * kCp[2] + kFAr * kCp[3];
  s.T = kTin + (-kDH) * xi / Cp;
  return s;
}

// 1 - Q/K and the forward rate (mol/(m3 s)) at conversion X.
double driving(double X, double* forward) {
  const State s = at(X);
  const double Ft = s.F[0] + s.F[1] + s.F[2] + s.F[3];
  double p[4];
  for (int i = 0; i < 4; ++i) p[i] = s.F[i] / Ft * kP;  // Pa
  const double bar = 1e5;
  const double lnQ = 2 * std::log(p[2] / bar) - std::log(p[0] / bar) - 3 * std::log(p[1] / bar);
  const double lnK = std::log(kK) - kDH / kR * (1 / s.T - 1 / kTK);
  const double k = kA * std::exp(-kEa / kR * (1 / s.T - 1 / kTref));  // per bar^2
  if (forward) *forward = k * (p[0] / bar) * (p[1] / bar);
  return -std::expm1(lnQ - lnK);
}

double equilibrium_X() {
  gsl_function f;
  f.function = [](double X, void*) { return driving(X, nullptr); };
  f.params = nullptr;
  gsl_root_fsolver* s = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
  gsl_root_fsolver_set(s, &f, 0.0, 0.999);
  double X = 0;
  for (int it = 0; it < 200; ++it) {
    gsl_root_fsolver_iterate(s);
    X = gsl_root_fsolver_root(s);
    if (gsl_root_test_interval(gsl_root_fsolver_x_lower(s), gsl_root_fsolver_x_upper(s), 0,
                               1e-16) == GSL_SUCCESS)
      break;
  }
  gsl_root_fsolver_free(s);
  return X;
}

// V = F_N2,0 ∫ dX / r over [0, X_t], in u = -ln(X_eq - X): dX = (X_eq - X) du.
double reference_volume(double X_eq, double X_t) {
  struct P {
    double X_eq;
  } par{X_eq};
  gsl_function f;
  f.function = [](double u, void* v) {
    const double gap = std::exp(-u);
    const double X = static_cast<P*>(v)->X_eq - gap;
    double fwd = 0;
    const double d = driving(X, &fwd);
    return kFN2 * gap / (fwd * d);
  };
  f.params = &par;
  gsl_integration_workspace* w = gsl_integration_workspace_alloc(2000);
  double V = 0, err = 0;
  gsl_integration_qag(&f, -std::log(X_eq), -std::log(X_eq - X_t), 0, 1e-13, 2000, GSL_INTEG_GAUSS61,
                      w, &V, &err);
  gsl_integration_workspace_free(w);
  return V;
}

}  // namespace

TEST_CASE("a bed sized within a hair of equilibrium is held to the tolerance", "[pfr][reach]") {
  gsl_set_error_handler_off();
  const double X_eq = equilibrium_X();
  REQUIRE(X_eq > 0.1);
  REQUIRE(X_eq < 0.5);
  const rxtrain::UnitParser units;
  const double rtol = rxtrain::CvodeOptions{}.rtol;
  for (const double gap : {1e-3, 1e-4, 1e-5, 1e-6, 2e-6, 1e-7, 1e-8}) {
    const double X_t = X_eq - gap;
    std::string text = kCase;
    text.replace(text.find("TARGET"), 6, fmt::format("{:.17g}", X_t));
    const rxtrain::Case c = rxtrain::load_case_from_string(text, "nh3.yaml", units);
    const rxtrain::TrainResult r = rxtrain::run_train(c);
    const double V_ref = reference_volume(X_eq, X_t);
    INFO("gap " << gap << ": V " << *r.stages[0].volume << " reference " << V_ref);
    CHECK(std::abs(*r.stages[0].volume - V_ref) <= 10 * rtol * V_ref);
    // The reach is the same equilibrium point, and the size is flagged as
    // ill-conditioned close to it.
    REQUIRE(r.stages[0].reach);
    CHECK(r.stages[0].reach->X_max == Approx(X_eq).epsilon(1e-10));
    REQUIRE(r.stages[0].size_sensitivity);
    const bool flagged = *r.stages[0].size_sensitivity > 1e-3;
    bool warned = false;
    for (const auto& w : r.warnings)
      warned = warned || w.find("ill-conditioned") != std::string::npos;
    CHECK(warned == flagged);
    if (gap <= 1e-6) CHECK(flagged);
  }
}
