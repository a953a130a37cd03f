// ReactionThermo (one polynomial per temperature stretch for dH, dCp,
// ln K) against GSL quadrature and differentiation of the species' cp, and
// against the thermo-derived K of SO2 oxidation in reference-data.md.
#include "rxtrain/chem/reaction_thermo.hpp"

#include <gsl/gsl_deriv.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <memory>
#include <vector>

#include "rxtrain/kinetics/mechanism.hpp"

using namespace rxtrain;

namespace {

// NIST WebBook Shomate coefficients (Chase 1998), reference-data.md
// section 1, with that table's H (the enthalpy of formation, kJ/mol) and
// the standard entropy from its G column by the WebBook's formula
// S = A ln t + B t + C t^2/2 + D t^3/3 - E/(2 t^2) + G at t = 0.29815 —
// the data the section 5 values of K were computed from.
Species shomate(const char* id, std::vector<ShomateSet> sets, double H_kJ, double G) {
  const auto& c = sets.front().c;
  const double t = kReferenceT / 1000;
  const double s298 = c[0] * std::log(t) + c[1] * t + c[2] * t * t / 2 + c[3] * t * t * t / 3 -
                      c[4] / (2 * t * t) + G;
  Species sp;
  sp.id = id;
  sp.thermo = ThermoModel(CpShomate{std::move(sets)}, H_kJ * 1e3, s298);
  return sp;
}
Species so2() {
  return shomate("SO2",
                 {{{21.43049, 74.35094, -57.75217, 16.35534, 0.086731}, 298, 1200},
                  {{57.48188, 1.009328, -0.076290, 0.005174, -4.045401}, 1200, 6000}},
                 -296.8422, 254.8872);
}
Species o2() {
  return shomate("O2",
                 {{{31.32234, -20.23531, 57.86644, -36.50624, -0.007374}, 100, 700},
                  {{30.03235, 8.772972, -3.988133, 0.788313, -0.741599}, 700, 2000}},
                 0.0, 246.7945);
}
Species so3() {
  return shomate("SO3",
                 {{{24.02503, 119.4607, -94.38686, 26.96237, -0.117517}, 298, 1200},
                  {{81.99008, 0.622236, -0.122440, 0.008294, -6.703688}, 1200, 6000}},
                 -395.7654, 253.5186);
}

double gsl_integral(const std::function<double(double)>& f, double a, double b) {
  gsl_function g;
  g.function = [](double x, void* p) {
    return (*static_cast<std::function<double(double)>*>(p))(x);
  };
  g.params = const_cast<std::function<double(double)>*>(&f);
  std::unique_ptr<gsl_integration_workspace, decltype(&gsl_integration_workspace_free)> ws(
      gsl_integration_workspace_alloc(1000), &gsl_integration_workspace_free);
  double result = 0, abserr = 0;
  gsl_integration_qags(&g, a, b, 0.0, 1e-13, 1000, ws.get(), &result, &abserr);
  return result;
}

// Integral over [a, b] split at the breaks (cp jumps there).
double piecewise_integral(const std::function<double(double)>& f, double a, double b,
                          std::vector<double> breaks) {
  std::sort(breaks.begin(), breaks.end());
  const double lo = std::min(a, b), hi = std::max(a, b);
  double total = 0, from = lo;
  for (double x : breaks)
    if (x > lo && x < hi) total += gsl_integral(f, from, x), from = x;
  total += gsl_integral(f, from, hi);
  return b >= a ? total : -total;
}

struct GslNoAbort {
  gsl_error_handler_t* old = gsl_set_error_handler_off();
  ~GslNoAbort() { gsl_set_error_handler(old); }
};

}  // namespace

TEST_CASE("reaction dH and dCp: GSL quadrature of sum nu cp across every set boundary",
          "[thermo][reaction]") {
  GslNoAbort no_abort;
  // SO2 + 1/2 O2 -> SO3 plus an inert-looking constant-cp and polynomial
  // species given a stoichiometric role, so that four models and the
  // boundaries at 700 K (O2) and 1200 K (SO2, SO3) all take part.
  Species c;
  c.id = "C";
  c.thermo = ThermoModel(CpConstant{29.1}, -10e3, 150.0);
  Species p;
  p.id = "P";
  p.thermo = ThermoModel(CpPolynomial{{25.0, 2.0e-2, -1.0e-5, 2.0e-9}, std::nullopt}, 5e3, 180.0);
  const std::vector<Species> sp = {so2(), o2(), so3(), c, p};
  const std::vector<double> nu = {-1, -0.5, 1, 0.25, -0.75};
  const double dH_298 = -98.93e3;  // any value: it only shifts dH
  const ReactionThermo rt(sp, nu, dH_298);
  const std::function<double(double)> dcp = [&](double T) {
    double s = 0;
    for (std::size_t i = 0; i < sp.size(); ++i) s += nu[i] * sp[i].thermo.cp(T);
    return s;
  };
  for (double T : {300.0, 450.0, 699.9, 700.0, 850.0, 1199.0, 1200.0, 1500.0, 1900.0}) {
    INFO("T = " << T);
    CHECK(rt.dCp(T) == Approx(dcp(T)).epsilon(1e-12));
    const double ref = dH_298 + piecewise_integral(dcp, kReferenceT, T, {700, 1200});
    CHECK(rt.dH(T) == Approx(ref).epsilon(1e-11));
  }
}

TEST_CASE("reaction ln K: SO2 oxidation against the thermo-derived K of reference-data.md",
          "[thermo][reaction]") {
  const std::vector<Species> sp = {so2(), o2(), so3()};
  const std::vector<double> nu = {-1, -0.5, 1};
  const double dH_298 = (-395.7654 + 296.8422) * 1e3;
  const ReactionThermo rt(sp, nu, dH_298);
  REQUIRE(rt.has_gibbs());
  // reference-data.md section 5: K (1 bar basis) from the section 1 Shomate
  // data, 600/700/800/1000 K = 4855 / 286.2 / 34.45 / 1.806 bar^-1/2, given
  // to four significant digits, so 0.05 %.
  CHECK(std::exp(rt.ln_K(600)) == Approx(4855).epsilon(5e-4));
  CHECK(std::exp(rt.ln_K(700)) == Approx(286.2).epsilon(5e-4));
  CHECK(std::exp(rt.ln_K(800)) == Approx(34.45).epsilon(5e-4));
  CHECK(std::exp(rt.ln_K(1000)) == Approx(1.806).epsilon(5e-4));
  // The same Gibbs energy species by species (h - T s of each model).
  for (double T : {500.0, 700.0, 1250.0}) {
    double dG = 0;
    for (std::size_t i = 0; i < sp.size(); ++i)
      dG += nu[i] * (sp[i].thermo.h(T) - T * sp[i].thermo.s(T));
    CHECK(rt.ln_K(T) == Approx(-dG / (kGasConstant * T)).epsilon(1e-12));
  }
}

TEST_CASE("reaction d ln K/dT: van 't Hoff against GSL central differences", "[thermo][reaction]") {
  GslNoAbort no_abort;
  const std::vector<Species> sp = {so2(), o2(), so3()};
  const ReactionThermo rt(sp, {-1, -0.5, 1}, -98.93e3);
  struct Params {
    const ReactionThermo* rt;
  } params{&rt};
  gsl_function f;
  f.function = [](double T, void* p) { return static_cast<Params*>(p)->rt->ln_K(T); };
  f.params = &params;
  for (double T : {500.0, 650.0, 900.0, 1100.0, 1400.0}) {
    double d = 0, err = 0;
    gsl_deriv_central(&f, T, 1.0, &d, &err);
    INFO("T = " << T << ", GSL error estimate " << err);
    CHECK(rt.dln_K_dT(T) == Approx(d).epsilon(1e-7));
  }
}

TEST_CASE("reaction thermo: NASA-7 steps at T_mid and missing Gibbs data", "[thermo][reaction]") {
  // GRI-Mech 3.0 O2 and CO2 (reference-data.md section 4): the absolute h of
  // the two polynomials differs slightly at T_mid; the compiled form keeps
  // the step exactly as the species' own h does.
  Nasa7 o2;
  o2.low = {3.78245636,     -2.99673416E-03, 9.84730201E-06, -9.68129509E-09,
            3.24372837E-12, -1063.94356,     3.65767573};
  o2.high = {3.28253784,      1.48308754E-03, -7.57966669E-07, 2.09470555E-10,
             -2.16717794E-14, -1088.45772,    5.45323129};
  Nasa7 co2;
  co2.low = {2.35677352,      8.98459677E-03, -7.12356269E-06, 2.45919022E-09,
             -1.43699548E-13, -48371.9697,    9.90105222};
  co2.high = {3.85746029,      4.41437026E-03, -2.21481404E-06, 5.23490188E-10,
              -4.72084164E-14, -48759.1660,    2.27163806};
  std::vector<Species> sp(3);
  sp[0].thermo = ThermoModel(o2, std::nullopt, std::nullopt);
  sp[1].thermo = ThermoModel(co2, std::nullopt, std::nullopt);
  sp[2].thermo = ThermoModel(CpConstant{30.0}, std::nullopt, std::nullopt);  // no h_f, s
  const std::vector<double> nu = {-0.5, 1, 0};
  const ReactionThermo rt(sp, nu, -100e3);
  REQUIRE(rt.has_gibbs());  // the constant-cp species does not take part
  for (double T : {400.0, 999.999, 1000.0, 1000.001, 2500.0}) {
    INFO("T = " << T);
    double h_sens = 0, dG = 0;
    for (int i = 0; i < 2; ++i) {
      h_sens += nu[i] * sp[i].thermo.h_sensible(T);
      dG += nu[i] * (sp[i].thermo.h(T) - T * sp[i].thermo.s(T));
    }
    CHECK(rt.dH(T) == Approx(-100e3 + h_sens).epsilon(1e-12));
    CHECK(rt.ln_K(T) == Approx(-dG / (kGasConstant * T)).epsilon(1e-12));
  }
  const ReactionThermo no_gibbs(sp, {-0.5, 0, 1}, 0.0);
  CHECK_FALSE(no_gibbs.has_gibbs());
  CHECK_THROWS_AS(no_gibbs.ln_K(500), std::logic_error);
  CHECK_THROWS_AS(rt.dH(-1.0), std::domain_error);
}

TEST_CASE("Mechanism::cp from compiled pieces equals each species' model", "[thermo][reaction]") {
  Species c;
  c.id = "C";
  c.thermo = ThermoModel(CpConstant{29.1}, std::nullopt, std::nullopt);
  Nasa7 n2;  // GRI-Mech 3.0 N2 (reference-data.md section 4)
  n2.low = {3.298677,      1.4082404E-03, -3.963222E-06, 5.641515E-09,
            -2.444854E-12, -1020.8999,    3.950372};
  n2.high = {2.926640,      1.4879768E-03, -5.684760E-07, 1.0097038E-10,
             -6.753351E-15, -922.7977,     5.980528};
  Species n;
  n.id = "N2";
  n.thermo = ThermoModel(n2, std::nullopt, std::nullopt);
  const Mechanism mech(Phase::Gas, {so2(), o2(), so3(), c, n}, {});
  for (double T : {150.0, 298.15, 699.99, 700.0, 1000.0, 1199.0, 1200.0, 2500.0, 7000.0})
    for (int i = 0; i < mech.n_species(); ++i) {
      INFO("species " << i << ", T = " << T);
      CHECK(mech.cp(i, T) == Approx(mech.species()[i].thermo.cp(T)).epsilon(1e-13));
    }
  const std::vector<double> F = {1, 2, 3, 4, 5};
  double ref = 0;
  for (int i = 0; i < 5; ++i) ref += F[i] * mech.species()[i].thermo.cp(800);
  CHECK(mech.heat_capacity_flow(800, F.data()) == Approx(ref).epsilon(1e-13));
  CHECK_THROWS_AS(mech.cp(0, 0.0), std::domain_error);
}
