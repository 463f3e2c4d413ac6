// What the events of a stream do, counted: the event-count mix that the action mix turns into
// (an arrival is one vertex but ~10 events, a departure one event), and how many drifts and
// departures hit the matching.
#pragma once

#include <cstddef>
#include <span>
#include <unordered_map>
#include <vector>

#include "yoke/events.h"
#include "yoke/pool.h"

namespace yoke::bench {

struct EventTally {
  // Events, by what they do to the pool.
  std::size_t drift_events = 0;      // `set` on an edge that exists: a weight change
  std::size_t arrival_events = 0;    // `add`, or a `set` that creates an edge
  std::size_t departure_events = 0;  // `remove`
  std::size_t other_events = 0;      // `unset`, `hold`, `release` (the benchmark mix draws none)
  std::size_t arrivals = 0;          // vertices that appeared (arrival actions)

  // Looked up in the pool just before the commit that carries the event, outside the timing.
  std::size_t drifts_on_matched = 0;   // the edge was a matched pair
  std::size_t departures_matched = 0;  // the vertex had a mate

  std::size_t events() const {
    return drift_events + arrival_events + departure_events + other_events;
  }
};

// Tells a weight change from a new edge by keeping the pool's adjacency, by key. Lookups never
// iterate the map, so the counts are deterministic. O(degree) per event.
class EventClassifier {
 public:
  // Counts the events of `batch` into `tally` (nullptr: learn them only, as for the base graph).
  void classify(std::span<const Event> batch, EventTally* tally);

 private:
  bool arrive(VertexKey key);  // true when the key is new
  bool has_edge(VertexKey u, VertexKey v) const;
  static void erase_one(std::vector<VertexKey>& list, VertexKey key);

  std::unordered_map<VertexKey, std::vector<VertexKey>> neighbours_;
};

// Adds the matched drifts and departures of `batch`, as the pool stands before committing it.
void count_matched(const Pool& pool, std::span<const Event> batch, EventTally& tally);

}  // namespace yoke::bench
