// The first-order irreversible A -> B liquid tank of the stability tests,
// and its closed forms (van Heerden, Ind. Eng. Chem. 45 (1953) 1242: the
// steady states are the intersections of the heat-generation curve
// J X(T), X = k tau / (1 + k tau), with the heat-removal line T - T0 (plus
// UA (T - T_c) / (F0 cp) when cooled); ignition and extinction are where
// the two touch, J dX/dT = 1 + UA / (F0 cp)). Invented data: pure A at
// 10 mol/s, 1e-4 m3/mol for A and B (v0 = 1e-3 m3/s), cp 150 J/(mol K) for
// both (dCp = 0), k = k_ref exp(-ER (1/T - 1/T_ref)).
#pragma once

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/kinetics/mechanism.hpp"

namespace rxtrain::test {

struct FirstOrderTank {
  double F0 = 10.0;      // mol/s of A
  double v = 1e-4;       // m3/mol
  double cp = 150.0;     // J/(mol K)
  double dH = -30000.0;  // J/mol
  double k_ref = 1.0;    // 1/s at T_ref
  double T_ref = 350.0;  // K
  double ER = 12000.0;   // Ea / R, K
  double UA = 0.0;       // W/K
  double T_c = 300.0;    // K, coolant

  double J() const { return -dH / cp; }  // adiabatic rise, K
  double k(double T) const { return k_ref * std::exp(-ER * (1.0 / T - 1.0 / T_ref)); }
  double X(double T, double tau) const {
    const double kt = k(T) * tau;
    return kt / (1 + kt);
  }
  // Heat removed minus heat generated, per F0 cp (K).
  double residual(double T, double T0, double tau) const {
    return T - T0 + UA / (F0 * cp) * (T - T_c) - J() * X(T, tau);
  }
  // Slope condition: d(removal)/dT - d(generation)/dT.
  double tangency(double T, double tau) const {
    const double x = X(T, tau);
    return 1 + UA / (F0 * cp) - J() * x * (1 - x) * ER / (T * T);
  }

  Mechanism mechanism() const {
    auto sp = [&](const std::string& id) {
      Species s;
      s.id = id;
      s.name = id;
      s.mw = 0.1;
      s.density = 0.1 / v;
      s.thermo = ThermoModel(CpConstant{cp}, std::nullopt, std::nullopt);
      return s;
    };
    Reaction r;
    r.id = "r1";
    r.equation = "A => B";
    r.nu = {-1, 1};
    r.rate.A = k_ref;
    r.rate.Ea = ER * kGasConstant;
    r.rate.T_ref = T_ref;
    r.rate.orders = {1, 0};
    r.dH_298 = dH;
    return Mechanism(Phase::Liquid, {sp("A"), sp("B")}, {r});
  }
  ReactorSpec spec(double tau, std::optional<double> C_vessel = {}) const {
    ReactorSpec s;
    s.id = "R1";
    s.type = ReactorType::Cstr;
    s.heat = HeatMode::Adiabatic;
    s.volume = tau * F0 * v;
    s.heat_capacity = C_vessel;
    if (UA > 0) s.tank_cooling = TankCooling{UA, T_c};
    s.where = {"case.yaml", 7, 3};
    return s;
  }
};

// Every root of f in [lo, hi] by a scan for sign changes (step dT) and
// GSL's Brent, to 1e-13 relative.
inline std::vector<double> gsl_roots(const std::function<double(double)>& f, double lo, double hi,
                                     double dT) {
  std::unique_ptr<gsl_root_fsolver, decltype(&gsl_root_fsolver_free)> solver(
      gsl_root_fsolver_alloc(gsl_root_fsolver_brent), &gsl_root_fsolver_free);
  REQUIRE(solver);
  gsl_function fn{
      [](double x, void* p) { return (*static_cast<const std::function<double(double)>*>(p))(x); },
      const_cast<std::function<double(double)>*>(&f)};
  std::vector<double> roots;
  for (double a = lo; a < hi; a += dT) {
    const double b = a + dT;
    if ((f(a) > 0) == (f(b) > 0)) continue;
    REQUIRE(gsl_root_fsolver_set(solver.get(), &fn, a, b) == GSL_SUCCESS);
    int status = GSL_CONTINUE;
    for (int it = 0; it < 200 && status == GSL_CONTINUE; ++it) {
      gsl_root_fsolver_iterate(solver.get());
      status = gsl_root_test_interval(gsl_root_fsolver_x_lower(solver.get()),
                                      gsl_root_fsolver_x_upper(solver.get()), 0, 1e-13);
    }
    REQUIRE(status == GSL_SUCCESS);
    roots.push_back(gsl_root_fsolver_root(solver.get()));
  }
  return roots;
}

// The turning points in the feed temperature at space time tau: the
// reactor temperatures where the slope condition holds, and the feed
// temperatures T0 = T - J X(T) (+ cooling) that put the steady state there.
struct TurningPoint {
  double T;   // reactor, K
  double T0;  // feed, K
};
inline std::vector<TurningPoint> closed_form_turning_points(const FirstOrderTank& t, double tau) {
  std::vector<TurningPoint> out;
  for (double T : gsl_roots([&](double x) { return t.tangency(x, tau); }, 250.0, 800.0, 0.01)) {
    // residual = 0 at T0: T0 = T + UA/(F0 cp)(T - Tc) - J X.
    const double T0 = T + t.UA / (t.F0 * t.cp) * (T - t.T_c) - t.J() * t.X(T, tau);
    out.push_back({T, T0});
  }
  return out;
}

}  // namespace rxtrain::test
