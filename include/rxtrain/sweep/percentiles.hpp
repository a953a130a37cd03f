// Sample percentiles. Definition: Hyndman & Fan, "Sample quantiles in
// statistical packages", The American Statistician 50 (1996) 361-365,
// definition 7 (linear interpolation between order statistics, the default
// of R and NumPy): with the n values sorted x[0] <= ... <= x[n-1] and
// h = (n - 1) p,
//   Q(p) = x[floor h] + (h - floor h) (x[floor h + 1] - x[floor h]).
// Example: {1, 2, 3, 4} gives P5 = 1.15, P50 = 2.5, P95 = 3.85.
#pragma once

#include <optional>
#include <span>
#include <vector>

namespace rxtrain::sweep {

// Q(p) of `sorted` (ascending, finite, non-empty), 0 <= p <= 1.
double percentile_sorted(std::span<const double> sorted, double p);

// Q(p) of unsorted values (copied and sorted); nullopt when empty.
std::optional<double> percentile(std::vector<double> values, double p);

struct PercentileSummary {
  std::size_t n = 0;  // values the percentiles are taken over
  double p5 = 0, p50 = 0, p95 = 0;
};

// P5, P50 and P95; nullopt when there are no values.
std::optional<PercentileSummary> summarize(std::vector<double> values);

}  // namespace rxtrain::sweep
