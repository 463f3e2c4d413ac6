// A whole event stream drawn before any clock starts: the generator's cost and its memory stay
// out of the pool's timings and heap figures (the generator is gone before the pool exists).
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "yoke/events.h"
#include "yoke/pool.h"
#include "tools/bench/event_tally.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::bench {

struct StoredStream {
  std::vector<Event> base;  // the first batch: the whole base graph
  std::size_t base_vertices = 0;
  std::size_t base_edges = 0;
  std::vector<Event> events;          // every later event, in stream order
  std::vector<std::size_t> batch_end;  // batch i is events[batch_end[i-1], batch_end[i])
  EventTally tally;                    // of the later events; count_matched fills in the rest
  double generate_ms = 0;              // drawing, storing and classifying

  std::size_t batches() const { return batch_end.size(); }
  std::span<const Event> batch(std::size_t i) const {
    const std::size_t begin = i == 0 ? 0 : batch_end[i - 1];
    return std::span<const Event>(events).subspan(begin, batch_end[i] - begin);
  }
};

// Draws every batch of `spec` and classifies its events. Throws what EventStream throws.
StoredStream store_stream(const gen::StreamSpec& spec);

// Throws, naming the batch (0: the base) and the event, when `pool` would refuse `batch`: a
// generated stream that the pool refuses is a generator bug, not a measurement.
void reject_if_invalid(const Pool& pool, std::span<const Event> batch, std::size_t commit);

}  // namespace yoke::bench
