// Student's t distribution: its CDF through the regularized incomplete
// beta function, I_x(a, b) by its continued fraction (evaluated by the
// modified Lentz method), and its quantile by bisection on the CDF. For
// the confidence intervals of fitted parameters.
#pragma once

namespace rxtrain {

// I_x(a, b), a, b > 0, 0 <= x <= 1 (accurate to about 1e-14).
double incomplete_beta(double a, double b, double x);
// P(T <= t) for T with nu > 0 degrees of freedom.
double student_t_cdf(double t, double nu);
// The t with student_t_cdf(t, nu) = p, 0 < p < 1.
double student_t_quantile(double p, double nu);

}  // namespace rxtrain
