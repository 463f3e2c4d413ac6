#include "replay_stats.h"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <string>

namespace yoke::postmortem {
namespace {

// Nearest rank: the smallest value with at least p% of the list at or below it. 0 if empty.
std::uint64_t percentile(const std::vector<std::uint64_t>& sorted, std::uint64_t p) {
  if (sorted.empty()) return 0;
  const std::uint64_t rank = std::max<std::uint64_t>(1, (p * sorted.size() + 99) / 100);
  return sorted[rank - 1];
}

// With two decimals; 0.00 if empty.
std::string mean(const std::vector<std::uint64_t>& values) {
  double sum = 0;
  for (const std::uint64_t v : values) sum += static_cast<double>(v);
  const double value = values.empty() ? 0.0 : sum / static_cast<double>(values.size());
  char text[64];
  const auto end = std::to_chars(text, text + sizeof text, value, std::chars_format::fixed, 2);
  return std::string(text, end.ptr);
}

}  // namespace

bool ReplayStats::committed(const Pool&, const CommitStep& step) {
  repair_us_.push_back(step.repair_ns / 1000);
  searches_.push_back(step.result.stats.searches);
  touched_.push_back(step.result.stats.vertices_touched);
  events_ += step.commit.events.size();
  repair_ns_ += step.repair_ns;
  return true;
}

void ReplayStats::finished(const Pool&, std::uint64_t) {
  std::sort(repair_us_.begin(), repair_us_.end());
  std::sort(searches_.begin(), searches_.end());
  std::sort(touched_.begin(), touched_.end());
  out_ << "stats commits " << repair_us_.size() << " events " << events_ << '\n';
  out_ << "stats repair_us p50 " << percentile(repair_us_, 50) << " p90 "
       << percentile(repair_us_, 90) << " p99 " << percentile(repair_us_, 99) << " max "
       << percentile(repair_us_, 100) << '\n';
  out_ << "stats searches_per_commit mean " << mean(searches_) << " max "
       << percentile(searches_, 100) << '\n';
  out_ << "stats touched_per_commit mean " << mean(touched_) << " p99 " << percentile(touched_, 99)
       << " max " << percentile(touched_, 100) << '\n';
  const double per_second = events_ == 0
                                ? 0.0
                                : static_cast<double>(events_) * 1e9 /
                                      static_cast<double>(std::max<std::uint64_t>(repair_ns_, 1));
  out_ << "stats events_per_second " << std::llround(per_second) << '\n';
}

}  // namespace yoke::postmortem
