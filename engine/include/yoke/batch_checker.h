// Checking batches before they are applied. The daemon gathers the batches that arrive together
// into one commit, so each batch must be checked against the pool as it will be once the
// batches accepted before it are applied, and a bad batch must be refused alone.
#pragma once

#include <memory>
#include <optional>
#include <span>

#include "yoke/events.h"

namespace yoke {

class Pool;

// Checks consecutive batches against one pool plus the batches it accepted so far. The pool
// must not change while the checker holds batches: commit the accepted batches, then clear()
// it (or start a new one).
class BatchChecker {
 public:
  explicit BatchChecker(const Pool& pool);
  ~BatchChecker();
  BatchChecker(BatchChecker&&) noexcept;
  BatchChecker& operator=(BatchChecker&&) noexcept;
  BatchChecker(const BatchChecker&) = delete;
  BatchChecker& operator=(const BatchChecker&) = delete;

  // The first event of `batch` that cannot be applied after the batches accepted so far, or
  // nothing, in which case the batch counts as accepted for the batches checked after it. A
  // refused batch leaves the checker as it was. The vertex and edge limits hold at the end of
  // the batch, not after each event: a batch ending above one is refused (limit_exceeded) at
  // the event from which that count stayed above it (the earlier of the two if both are). The
  // edge count is an upper bound: a departure's edges keep their places until the window is
  // committed (counting them would cost the vertex's degree). O(batch).
  std::optional<EventError> accept(std::span<const Event> batch);

  // Forgets every batch accepted, keeping the memory it took: the checker then checks against
  // the pool as it is now (call it once the accepted batches are committed to the pool, to
  // check the next ones without building the tables again). O(entries held).
  void clear();

  // Events accepted so far, over all batches.
  std::size_t accepted_events() const;

 private:
  class Overlay;
  std::unique_ptr<Overlay> overlay_;
};

}  // namespace yoke
