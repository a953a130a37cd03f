// Adaptive Gauss-Kronrod quadrature (7-point Gauss, 15-point Kronrod) of a
// smooth function on [a, b], bisecting the interval of largest error
// estimate until the estimated error is within the tolerance. Used where a
// quantity is an integral along a known path, e.g. a bed's volume as the
// integral of 1/rate over the conversion, whose integrand grows steeply
// near equilibrium: the bisections gather there.
//
// Example:
//   QuadratureResult q = integrate([](double x) { return 1 / (1.0000001 - x); }, 0, 1);
//   // q.value = ln(1.0000001 / 1e-7), q.pieces holds where the work went.
#pragma once

#include <functional>
#include <vector>

namespace rxtrain {

struct QuadratureOptions {
  // Stops when the summed error estimate is below
  // max(rel_tolerance * |value|, abs_tolerance).
  double rel_tolerance = 1e-12;
  double abs_tolerance = 0;
  // Most subintervals; 2000 bisections reach 2^-60 of [a, b] many times over.
  int max_pieces = 2000;
  // Pieces wider than this are split whatever their error, e.g. so that a
  // profile drawn from the pieces has points along the whole range.
  // 0: no such limit.
  double max_width = 0;
};

struct QuadraturePiece {
  double a = 0, b = 0;
  double value = 0;  // the integral over [a, b]
  double error = 0;  // its estimate, |K15 - G7|
};

struct QuadratureResult {
  double value = 0;
  double error = 0;                     // summed estimate
  bool converged = false;               // error within the tolerance
  std::vector<QuadraturePiece> pieces;  // ordered from a to b
};

// f may throw; the exception passes through.
QuadratureResult integrate(const std::function<double(double)>& f, double a, double b,
                           const QuadratureOptions& options = {});

}  // namespace rxtrain
