#include "metric_types.h"

#include <algorithm>
#include <cmath>
#include <utility>

namespace yoke::daemon::metrics {

const char* type_name(MetricType type) {
  switch (type) {
    case MetricType::counter:
      return "counter";
    case MetricType::gauge:
      return "gauge";
    case MetricType::histogram:
      return "histogram";
  }
  return "untyped";
}

Histogram::Histogram(std::vector<double> bounds)
    : bounds_(std::move(bounds)), bucket_counts_(bounds_.size() + 1, 0) {}

void Histogram::observe(double value) {
  // lower_bound: the first bound >= value, i.e. the first bucket whose "le" holds it. NaN
  // compares false with everything, so it is sent to +Inf explicitly rather than to bucket 0.
  const std::size_t bucket =
      std::isnan(value)
          ? bounds_.size()
          : static_cast<std::size_t>(std::lower_bound(bounds_.begin(), bounds_.end(), value) -
                                     bounds_.begin());
  ++bucket_counts_[bucket];
  ++count_;
  sum_ += value;
}

const char* histogram_bounds_error(const std::vector<double>& bounds) {
  for (std::size_t i = 0; i < bounds.size(); ++i) {
    if (!std::isfinite(bounds[i])) return "bucket bounds must be finite (+Inf is implicit)";
    if (i > 0 && !(bounds[i - 1] < bounds[i])) return "bucket bounds must strictly increase";
  }
  return nullptr;
}

}  // namespace yoke::daemon::metrics
