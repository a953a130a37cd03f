// The independent reference solvers the tests check against, from GSL:
// Runge-Kutta-Prince-Dormand (8,9) for ODEs and Brent's method for scalar
// roots. Shared by every test that needs them, so each check uses the same
// trusted wrapper.
#pragma once

#include <gsl/gsl_errno.h>
#include <gsl/gsl_min.h>
#include <gsl/gsl_odeiv2.h>
#include <gsl/gsl_roots.h>

#include <catch2/catch.hpp>
#include <cstddef>
#include <functional>
#include <memory>
#include <utility>
#include <vector>

namespace rxtrain::test {

// GSL's default handler aborts; while this lives, errors come back as codes.
struct GslNoAbort {
  gsl_error_handler_t* old = gsl_set_error_handler_off();
  ~GslNoAbort() { gsl_set_error_handler(old); }
};

using OdeRhs = std::function<void(double t, const double* y, double* dy)>;

// rk8pd with the given tolerances and first step, no step limit.
class GslOde {
 public:
  GslOde(int n, OdeRhs f, double rtol = 1e-12, double atol = 1e-12, double h0 = 1e-6)
      : f_(std::move(f)) {
    sys_ = {&GslOde::trampoline, nullptr, static_cast<std::size_t>(n), this};
    driver_.reset(gsl_odeiv2_driver_alloc_y_new(&sys_, gsl_odeiv2_step_rk8pd, h0, atol, rtol));
    gsl_odeiv2_driver_set_nmax(driver_.get(), 0);
  }
  // An autonomous system: f(y) only; a smaller first step by default.
  GslOde(int n, const std::function<void(const double*, double*)>& f, double rtol, double atol,
         double h0 = 1e-9)
      : GslOde(
            n, [f](double, const double* y, double* dy) { f(y, dy); }, rtol, atol, h0) {}

  // y from t0 to t1.
  void advance(double t0, double t1, std::vector<double>& y) {
    gsl_odeiv2_driver_reset(driver_.get());
    double t = t0;
    const int status = gsl_odeiv2_driver_apply(driver_.get(), &t, t1, y.data());
    REQUIRE(status == GSL_SUCCESS);
  }

 private:
  static int trampoline(double t, const double y[], double dydt[], void* p) {
    static_cast<GslOde*>(p)->f_(t, y, dydt);
    return GSL_SUCCESS;
  }
  OdeRhs f_;
  gsl_odeiv2_system sys_{};
  std::unique_ptr<gsl_odeiv2_driver, decltype(&gsl_odeiv2_driver_free)> driver_{
      nullptr, &gsl_odeiv2_driver_free};
};

// Brent's method for g(x) = 0 on [lo, hi] (signs opposite), to xtol absolute.
inline double gsl_brent(const std::function<double(double)>& g, double lo, double hi, double xtol) {
  gsl_function fn;
  fn.function = [](double x, void* p) {
    return (*static_cast<const std::function<double(double)>*>(p))(x);
  };
  fn.params = const_cast<std::function<double(double)>*>(&g);
  std::unique_ptr<gsl_root_fsolver, decltype(&gsl_root_fsolver_free)> s(
      gsl_root_fsolver_alloc(gsl_root_fsolver_brent), &gsl_root_fsolver_free);
  REQUIRE(gsl_root_fsolver_set(s.get(), &fn, lo, hi) == GSL_SUCCESS);
  for (int it = 0; it < 300; ++it) {
    REQUIRE(gsl_root_fsolver_iterate(s.get()) == GSL_SUCCESS);
    const double a = gsl_root_fsolver_x_lower(s.get());
    const double b = gsl_root_fsolver_x_upper(s.get());
    if (gsl_root_test_interval(a, b, xtol, 0) == GSL_SUCCESS) break;
  }
  return gsl_root_fsolver_root(s.get());
}

// GSL's Brent minimizer on -f: the x in [lo, hi] where f peaks, from a
// guess inside with f(guess) above both ends, to xtol absolute.
inline double gsl_maximize(const std::function<double(double)>& f, double guess, double lo,
                           double hi, double xtol) {
  const std::function<double(double)> minus_f = [&f](double x) { return -f(x); };
  gsl_function fn;
  fn.function = [](double x, void* p) {
    return (*static_cast<const std::function<double(double)>*>(p))(x);
  };
  fn.params = const_cast<std::function<double(double)>*>(&minus_f);
  std::unique_ptr<gsl_min_fminimizer, decltype(&gsl_min_fminimizer_free)> m(
      gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent), &gsl_min_fminimizer_free);
  REQUIRE(gsl_min_fminimizer_set(m.get(), &fn, guess, lo, hi) == GSL_SUCCESS);
  for (int it = 0; it < 100; ++it) {
    REQUIRE(gsl_min_fminimizer_iterate(m.get()) == GSL_SUCCESS);
    if (gsl_min_test_interval(gsl_min_fminimizer_x_lower(m.get()),
                              gsl_min_fminimizer_x_upper(m.get()), xtol, 0) == GSL_SUCCESS)
      break;
  }
  return gsl_min_fminimizer_x_minimum(m.get());
}

}  // namespace rxtrain::test
