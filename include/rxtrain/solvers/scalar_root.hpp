// Scalar root finding and minimization, written once: Brent's root finder
// and minimizer, and a bisection for sign changes. Header-only templates:
// the functions are called in inner loops with lambdas.
#pragma once

#include <algorithm>
#include <cmath>
#include <limits>

namespace rxtrain {

namespace scalar_detail {
constexpr double kEps = std::numeric_limits<double>::epsilon();
}  // namespace scalar_detail

// A root found by brent_root: x, and whether the tolerance was met within
// the iterations allowed.
struct ScalarRoot {
  double x = 0;
  bool converged = false;
};

// Brent's method (R. P. Brent, Algorithms for Minimization without
// Derivatives, 1973, ch. 4: bisection, secant and inverse quadratic
// interpolation) on [a, b] with f(a), f(b) of opposite signs or one zero.
template <class Fn>
ScalarRoot brent_root(Fn&& f, double a, double b, double fa, double fb, double rel_tol,
                      int max_iter) {
  if (fa == 0) return {a, true};
  if (fb == 0) return {b, true};
  double c = b, fc = fb, d = b - a, e = d;
  for (int it = 0; it < max_iter; ++it) {
    if ((fb > 0 && fc > 0) || (fb < 0 && fc < 0)) {
      c = a;
      fc = fa;
      d = e = b - a;
    }
    if (std::abs(fc) < std::abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const double tol1 = 2 * scalar_detail::kEps * std::abs(b) + 0.5 * rel_tol * std::abs(b);
    const double xm = 0.5 * (c - b);
    if (std::abs(xm) <= tol1 || fb == 0) return {b, true};
    if (std::abs(e) >= tol1 && std::abs(fa) > std::abs(fb)) {
      const double s = fb / fa;
      double p, q;
      if (a == c) {
        p = 2 * xm * s;
        q = 1 - s;
      } else {
        const double qq = fa / fc;
        const double r = fb / fc;
        p = s * (2 * xm * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      p = std::abs(p);
      if (2 * p < std::min(3 * xm * q - std::abs(tol1 * q), std::abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = xm;
        e = d;
      }
    } else {
      d = xm;
      e = d;
    }
    a = b;
    fa = fb;
    b += std::abs(d) > tol1 ? d : (xm > 0 ? tol1 : -tol1);
    fb = f(b);
  }
  return {b, false};
}

// Brent's minimization (same book, ch. 5: golden section with parabolic
// interpolation) of f on [a, b]; returns the abscissa of the minimum.
template <class Fn>
double brent_minimize(Fn&& f, double a, double b, double abs_tol, int max_iter) {
  const double golden = 0.5 * (3.0 - std::sqrt(5.0));
  const double sqrt_eps = std::sqrt(scalar_detail::kEps);
  double x = a + golden * (b - a), w = x, v = x;
  double fx = f(x), fw = fx, fv = fx;
  double d = 0, e = 0;
  for (int it = 0; it < max_iter; ++it) {
    const double xm = 0.5 * (a + b);
    const double tol1 = sqrt_eps * std::abs(x) + abs_tol / 3;
    const double tol2 = 2 * tol1;
    if (std::abs(x - xm) <= tol2 - 0.5 * (b - a)) break;
    bool use_golden = true;
    if (std::abs(e) > tol1) {
      double r = (x - w) * (fx - fv);
      double q = (x - v) * (fx - fw);
      double p = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) p = -p;
      q = std::abs(q);
      r = e;
      e = d;
      if (std::abs(p) < std::abs(0.5 * q * r) && p > q * (a - x) && p < q * (b - x)) {
        d = p / q;
        const double u = x + d;
        if (u - a < tol2 || b - u < tol2) d = x < xm ? tol1 : -tol1;
        use_golden = false;
      }
    }
    if (use_golden) {
      e = x < xm ? b - x : a - x;
      d = golden * e;
    }
    const double u = std::abs(d) >= tol1 ? x + d : x + (d > 0 ? tol1 : -tol1);
    const double fu = f(u);
    if (fu <= fx) {
      (u < x ? b : a) = x;
      v = w, fv = fw;
      w = x, fw = fx;
      x = u, fx = fu;
    } else {
      (u < x ? a : b) = u;
      if (fu <= fw || w == x) {
        v = w, fv = fw;
        w = u, fw = fu;
      } else if (fu <= fv || v == x || v == w) {
        v = u, fv = fu;
      }
    }
  }
  return x;
}

// Where slope(x) changes sign inside [lo, hi], the sign at lo being that
// of s_lo (e.g. dT/dV on CVODE's interpolating polynomial, for a
// temperature peak): bisection to 1e-14 relative, the midpoint of the last
// bracket.
template <class Slope>
double bisect_sign_change(double lo, double hi, double s_lo, Slope&& slope) {
  for (int it = 0; it < 60 && hi - lo > 1e-14 * std::max(std::abs(hi), 1e-300); ++it) {
    const double mid = 0.5 * (lo + hi);
    const double s_mid = slope(mid);
    if (s_mid == 0) return mid;
    if ((s_mid > 0) == (s_lo > 0)) {
      lo = mid;
      s_lo = s_mid;
    } else {
      hi = mid;
    }
  }
  return 0.5 * (lo + hi);
}

}  // namespace rxtrain
