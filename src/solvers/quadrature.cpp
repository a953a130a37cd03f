#include "rxtrain/solvers/quadrature.hpp"

#include <algorithm>
#include <array>
#include <cmath>

namespace rxtrain {

namespace {

// Nodes and weights of the 7-point Gauss and 15-point Kronrod rules on
// [-1, 1] (Piessens et al., QUADPACK, 1983, routine QK15; the same
// constants as GSL's qk15).
constexpr std::array<double, 8> kXgk = {
    0.991455371120812639206854697526329, 0.949107912342758524526189684047851,
    0.864864423359769072789712788640926, 0.741531185599394439863864773280788,
    0.586087235467691130294144845693013, 0.405845151377397166906606412076961,
    0.207784955007898467600689403773245, 0.000000000000000000000000000000000};
constexpr std::array<double, 8> kWgk = {
    0.022935322010529224963732008058970, 0.063092092629978553290700663189204,
    0.104790010322250183839876322541518, 0.140653259715525918745189590510238,
    0.169004726639267902826583426598550, 0.190350578064785409913256402421014,
    0.204432940075298892414161999234649, 0.209482141084727828012999174891714};
constexpr std::array<double, 4> kWg = {
    0.129484966168869693270611432679082, 0.279705391489276667901467771423780,
    0.381830050505118944950369775488975, 0.417959183673469387755102040816327};

QuadraturePiece qk15(const std::function<double(double)>& f, double a, double b) {
  const double c = 0.5 * (a + b), h = 0.5 * (b - a);
  const double fc = f(c);
  double gauss = fc * kWg[3], kronrod = fc * kWgk[7];
  for (int j = 0; j < 7; ++j) {
    const double dx = h * kXgk[j];
    const double sum = f(c - dx) + f(c + dx);
    kronrod += kWgk[j] * sum;
    if (j % 2 == 1) gauss += kWg[j / 2] * sum;  // the Gauss nodes are Kronrod's odd ones
  }
  return QuadraturePiece{a, b, kronrod * h, std::abs((kronrod - gauss) * h)};
}

}  // namespace

QuadratureResult integrate(const std::function<double(double)>& f, double a, double b,
                           const QuadratureOptions& options) {
  QuadratureResult r;
  const int first =
      options.max_width > 0
          ? std::clamp(static_cast<int>(std::ceil(std::abs(b - a) / options.max_width)), 1,
                       options.max_pieces)
          : 1;
  for (int k = 0; k < first; ++k)
    r.pieces.push_back(
        qk15(f, a + (b - a) * k / first, k + 1 == first ? b : a + (b - a) * (k + 1) / first));
  auto totals = [&] {
    r.value = r.error = 0;
    for (const auto& p : r.pieces) {
      r.value += p.value;
      r.error += p.error;
    }
  };
  totals();
  while (r.error > std::max(options.rel_tolerance * std::abs(r.value), options.abs_tolerance)) {
    if (static_cast<int>(r.pieces.size()) >= options.max_pieces) {
      std::sort(r.pieces.begin(), r.pieces.end(),
                [](const QuadraturePiece& p, const QuadraturePiece& q) { return p.a < q.a; });
      return r;
    }
    auto worst = std::max_element(
        r.pieces.begin(), r.pieces.end(),
        [](const QuadraturePiece& p, const QuadraturePiece& q) { return p.error < q.error; });
    const double lo = worst->a, hi = worst->b, mid = 0.5 * (lo + hi);
    // Round-off: the interval cannot be split further.
    if (!(mid > lo && mid < hi)) break;
    *worst = qk15(f, lo, mid);
    r.pieces.push_back(qk15(f, mid, hi));
    totals();
  }
  std::sort(r.pieces.begin(), r.pieces.end(),
            [](const QuadraturePiece& p, const QuadraturePiece& q) { return p.a < q.a; });
  r.converged =
      r.error <= std::max(options.rel_tolerance * std::abs(r.value), options.abs_tolerance);
  return r;
}

}  // namespace rxtrain
