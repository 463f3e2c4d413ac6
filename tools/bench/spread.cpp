#include "tools/bench/spread.h"

#include <algorithm>
#include <cmath>
#include <numeric>

namespace yoke::bench {
namespace {

double nearest_rank(const std::vector<double>& sorted, double percent) {
  const double count = static_cast<double>(sorted.size());
  const auto rank = static_cast<std::size_t>(std::ceil(percent / 100.0 * count));
  return sorted[std::clamp<std::size_t>(rank, 1, sorted.size()) - 1];
}

}  // namespace

Spread spread_of(std::vector<double> values) {
  Spread spread;
  spread.count = values.size();
  if (values.empty()) return spread;
  std::sort(values.begin(), values.end());
  spread.p50 = nearest_rank(values, 50);
  spread.p90 = nearest_rank(values, 90);
  spread.p99 = nearest_rank(values, 99);
  spread.max = values.back();
  const double sum = std::accumulate(values.begin(), values.end(), 0.0);
  spread.mean = sum / static_cast<double>(values.size());
  return spread;
}

double median_of(std::vector<double> values) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  const std::size_t mid = values.size() / 2;
  return values.size() % 2 == 1 ? values[mid] : (values[mid - 1] + values[mid]) / 2;
}

}  // namespace yoke::bench
