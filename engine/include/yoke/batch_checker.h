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
// must not change while the checker holds batches, but in one way: the accepted batches of a
// window (end_window()) may be staged into the pool (Pool::stage) while the checker keeps
// checking, if window_staged() is told before the checker next reads the pool. Otherwise commit
// the accepted batches, then clear() it (or start a new one).
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
  // Keys held on the side of the pool (vertices, edges and holds the accepted batches changed):
  // what the checker's memory grows with until clear(). O(1).
  std::size_t entries() const;

  // What a window's batches change in the pool's vertex and edge counts, as the checker counts
  // them (the edges: an upper bound, see accept()).
  struct CountChange {
    std::ptrdiff_t vertices = 0;
    std::ptrdiff_t edges = 0;
    bool operator==(const CountChange&) const = default;
  };
  // Ends a window: the count change of the batches accepted since the last end_window() (or
  // clear(), or construction). The checker keeps those batches and goes on checking after them.
  CountChange end_window();
  // The pool now holds a window ended with end_window() (staged or committed), whose count
  // change this was: those counts are the pool's now, so they leave the checker's. The
  // checker's entries of that window stay (they say what the pool says now). Windows in the
  // order ended. O(1).
  void window_staged(CountChange change);

 private:
  class Overlay;
  std::unique_ptr<Overlay> overlay_;
};

}  // namespace yoke
