#include "diff_recycler.h"

#include <utility>

namespace yoke::daemon {

v1::Diff DiffRecycler::take() {
  const std::lock_guard lock(mutex_);
  if (kept_.empty()) return v1::Diff();
  v1::Diff diff = std::move(kept_.back());  // same arena (none): the elements move with it
  kept_.pop_back();
  return diff;
}

void DiffRecycler::give(v1::Diff&& diff) {
  // Capacity, not size: a cleared field still holds the elements of its largest use.
  if (diff.removed().Capacity() + diff.added().Capacity() > kMaxKeptPairs) return;
  v1::Diff emptied = std::move(diff);
  emptied.Clear();  // the pair messages stay allocated, for the next add_removed()/add_added()
  const std::lock_guard lock(mutex_);
  if (kept_.size() < kMaxKept) kept_.push_back(std::move(emptied));
}

std::size_t DiffRecycler::kept() const {
  const std::lock_guard lock(mutex_);
  return kept_.size();
}

}  // namespace yoke::daemon
