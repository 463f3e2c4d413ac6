// `yoke replay --stats` as an observer of the replay: per-commit numbers kept for percentiles,
// totals for the rates, printed after the last commit (docs/contracts.md §3):
//
//     stats commits N events E
//     stats repair_us p50 A p90 B p99 C max D
//     stats searches_per_commit mean X max Y
//     stats touched_per_commit mean X p99 Y max Z
//     stats events_per_second X
//
// Percentiles are nearest-rank, means have two decimals, events_per_second is all events over
// all repair time (Pool::commit alone). Only the timings vary between runs of the same source.
#pragma once

#include <cstdint>
#include <ostream>
#include <vector>

#include "commit_observer.h"

namespace yoke::postmortem {

class ReplayStats : public CommitObserver {
 public:
  explicit ReplayStats(std::ostream& out) : out_(out) {}
  bool committed(const Pool& pool, const CommitStep& step) override;
  // Prints the lines. O(commits log commits).
  void finished(const Pool& pool, std::uint64_t at) override;

 private:
  std::ostream& out_;
  std::vector<std::uint64_t> repair_us_;
  std::vector<std::uint64_t> searches_;
  std::vector<std::uint64_t> touched_;
  std::uint64_t events_ = 0;
  std::uint64_t repair_ns_ = 0;
};

}  // namespace yoke::postmortem
