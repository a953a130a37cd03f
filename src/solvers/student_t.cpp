#include "rxtrain/solvers/student_t.hpp"

#include <cmath>
#include <limits>

namespace rxtrain {

namespace {

// The continued fraction of I_x(a, b) (Abramowitz and Stegun 26.5.8),
// which converges fast for x < (a + 1)/(a + b + 2).
double beta_fraction(double a, double b, double x) {
  constexpr double tiny = 1e-300, eps = 1e-16;
  double c = 1, d = 1 - (a + b) * x / (a + 1);
  if (std::abs(d) < tiny) d = tiny;
  d = 1 / d;
  double f = d;
  for (int m = 1; m <= 1000; ++m) {
    const double m2 = 2.0 * m;
    // Even step: d_2m = m (b - m) x / ((a + 2m - 1)(a + 2m)).
    double num = m * (b - m) * x / ((a + m2 - 1) * (a + m2));
    d = 1 + num * d;
    c = 1 + num / c;
    if (std::abs(d) < tiny) d = tiny;
    if (std::abs(c) < tiny) c = tiny;
    d = 1 / d;
    f *= d * c;
    // Odd step: d_2m+1 = -(a + m)(a + b + m) x / ((a + 2m)(a + 2m + 1)).
    num = -(a + m) * (a + b + m) * x / ((a + m2) * (a + m2 + 1));
    d = 1 + num * d;
    c = 1 + num / c;
    if (std::abs(d) < tiny) d = tiny;
    if (std::abs(c) < tiny) c = tiny;
    d = 1 / d;
    const double delta = d * c;
    f *= delta;
    if (std::abs(delta - 1) < eps) break;
  }
  return f;
}

}  // namespace

double incomplete_beta(double a, double b, double x) {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const double log_front =
      std::lgamma(a + b) - std::lgamma(a) - std::lgamma(b) + a * std::log(x) + b * std::log1p(-x);
  const double front = std::exp(log_front);
  if (x < (a + 1) / (a + b + 2)) return front * beta_fraction(a, b, x) / a;
  // The symmetry I_x(a, b) = 1 - I_1-x(b, a) where the fraction is slow.
  return 1 - front * beta_fraction(b, a, 1 - x) / b;
}

double student_t_cdf(double t, double nu) {
  const double x = nu / (nu + t * t);
  const double tail = 0.5 * incomplete_beta(0.5 * nu, 0.5, x);  // P(T > |t|)
  return t >= 0 ? 1 - tail : tail;
}

double student_t_quantile(double p, double nu) {
  if (p == 0.5) return 0;
  if (p < 0.5) return -student_t_quantile(1 - p, nu);
  // Bracket, then bisect to the last bit: the CDF is monotone.
  double lo = 0, hi = 1;
  while (student_t_cdf(hi, nu) < p && hi < 1e300) hi *= 2;
  for (int i = 0; i < 200; ++i) {
    const double mid = 0.5 * (lo + hi);
    if (mid == lo || mid == hi) break;
    (student_t_cdf(mid, nu) < p ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

}  // namespace rxtrain
