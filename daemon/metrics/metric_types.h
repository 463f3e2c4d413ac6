// The values behind one series each: a counter, a gauge, a histogram. They are plain numbers,
// not atomics: the daemon updates and renders them on its one event-loop thread, so there is
// nothing to synchronise. Using them from another thread needs the caller's own lock.
#pragma once

#include <concepts>
#include <cstdint>
#include <limits>
#include <type_traits>
#include <vector>

namespace yoke::daemon::metrics {

enum class MetricType { counter, gauge, histogram };

// "counter", "gauge", "histogram": the word of a # TYPE line.
const char* type_name(MetricType type);

// Only goes up; rendered as an integer.
class Counter {
 public:
  void add(std::uint64_t amount = 1) { value_ += amount; }
  std::uint64_t value() const { return value_; }

 private:
  std::uint64_t value_ = 0;
};

// A value that goes up and down. Set as an integer it renders exactly (no rounding to a double
// past 2^53); set as a double it renders in the shortest form that reads back the same.
class Gauge {
 public:
  void set(double value) {
    real_ = value;
    is_integer_ = false;
  }
  void set(std::int64_t value) {
    integer_ = value;
    is_integer_ = true;
  }
  // Any other integer type goes through set(int64): without this, set(5) would be ambiguous
  // between the two overloads above. Unsigned values past INT64_MAX are clamped to it.
  template <std::integral T>
  requires(!std::same_as<T, std::int64_t>) void set(T value) {
    if constexpr (std::is_unsigned_v<T>) {
      constexpr auto top = static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max());
      set(static_cast<std::int64_t>(static_cast<std::uint64_t>(value) > top ? top : value));
    } else {
      set(static_cast<std::int64_t>(value));
    }
  }

  bool is_integer() const { return is_integer_; }
  std::int64_t integer() const { return integer_; }  // meaningful when is_integer()
  double value() const { return is_integer_ ? static_cast<double>(integer_) : real_; }

 private:
  std::int64_t integer_ = 0;
  double real_ = 0;
  bool is_integer_ = true;
};

// Observations counted in fixed buckets. A value lands in the first bucket whose upper bound is
// at least the value; past the last bound, and NaN, land in the implicit +Inf bucket.
// observe() costs O(log buckets).
class Histogram {
 public:
  // `bounds`: finite and strictly increasing (the registry checks; see histogram_bounds_error).
  explicit Histogram(std::vector<double> bounds);

  void observe(double value);

  const std::vector<double>& bounds() const { return bounds_; }
  // Per bucket, not cumulative; one more entry than bounds(), the last for +Inf.
  const std::vector<std::uint64_t>& bucket_counts() const { return bucket_counts_; }
  std::uint64_t count() const { return count_; }
  double sum() const { return sum_; }

 private:
  std::vector<double> bounds_;
  std::vector<std::uint64_t> bucket_counts_;
  std::uint64_t count_ = 0;
  double sum_ = 0;
};

// Why `bounds` cannot be a histogram's bucket bounds, or nullptr when they can: each finite
// (+Inf is always the last bucket and is not listed) and each above the one before.
const char* histogram_bounds_error(const std::vector<double>& bounds);

}  // namespace yoke::daemon::metrics
