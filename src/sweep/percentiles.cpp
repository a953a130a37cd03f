#include "rxtrain/sweep/percentiles.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>

namespace rxtrain::sweep {

double percentile_sorted(std::span<const double> sorted, double p) {
  assert(!sorted.empty() && p >= 0 && p <= 1);
  const double h = static_cast<double>(sorted.size() - 1) * p;
  const double lo = std::floor(h);
  const auto i = static_cast<std::size_t>(lo);
  if (i + 1 >= sorted.size()) return sorted.back();
  const double frac = h - lo;
  // Equal neighbours (often +inf in the design margin) need no interpolation.
  if (frac == 0 || sorted[i] == sorted[i + 1]) return sorted[i];
  return sorted[i] + frac * (sorted[i + 1] - sorted[i]);
}

std::optional<double> percentile(std::vector<double> values, double p) {
  if (values.empty()) return std::nullopt;
  std::sort(values.begin(), values.end());
  return percentile_sorted(values, p);
}

std::optional<PercentileSummary> summarize(std::vector<double> values) {
  if (values.empty()) return std::nullopt;
  std::sort(values.begin(), values.end());
  return PercentileSummary{values.size(), percentile_sorted(values, 0.05),
                           percentile_sorted(values, 0.50), percentile_sorted(values, 0.95)};
}

}  // namespace rxtrain::sweep
