// The shape of a set of measurements (per-commit repair times, vertices touched per commit):
// nearest-rank percentiles, the largest value and the mean.
#pragma once

#include <cstddef>
#include <vector>

namespace yoke::bench {

struct Spread {
  std::size_t count = 0;
  double p50 = 0;
  double p90 = 0;
  double p99 = 0;
  double max = 0;
  double mean = 0;
};

// Nearest rank: the p-th percentile is the smallest value with at least p% of the values at or
// below it, so every figure is a value that was measured. O(n log n); takes a copy to sort.
Spread spread_of(std::vector<double> values);

// The median of a few values (the LEMON samples): the mean of the middle two for an even count.
double median_of(std::vector<double> values);

}  // namespace yoke::bench
