#include "tools/bench/event_tally.h"

#include <algorithm>

namespace yoke::bench {

void EventClassifier::classify(std::span<const Event> batch, EventTally* tally) {
  EventTally ignored;
  EventTally& t = tally != nullptr ? *tally : ignored;
  for (const Event& e : batch) {
    switch (e.kind) {
      case EventKind::add_vertex:
        t.arrivals += arrive(e.u) ? 1 : 0;
        ++t.arrival_events;
        break;
      case EventKind::set_edge: {
        t.arrivals += (arrive(e.u) ? 1 : 0) + (arrive(e.v) ? 1 : 0);
        if (has_edge(e.u, e.v)) {
          ++t.drift_events;
        } else {
          neighbours_[e.u].push_back(e.v);
          neighbours_[e.v].push_back(e.u);
          ++t.arrival_events;
        }
        break;
      }
      case EventKind::unset_edge:
        erase_one(neighbours_[e.u], e.v);
        erase_one(neighbours_[e.v], e.u);
        ++t.other_events;
        break;
      case EventKind::remove_vertex: {
        const auto at = neighbours_.find(e.u);
        if (at != neighbours_.end()) {
          for (const VertexKey other : at->second) erase_one(neighbours_[other], e.u);
          neighbours_.erase(at);
        }
        ++t.departure_events;
        break;
      }
      case EventKind::hold_pair:
      case EventKind::release_pair: ++t.other_events; break;  // no edge or vertex changes
    }
  }
}

bool EventClassifier::arrive(VertexKey key) { return neighbours_.try_emplace(key).second; }

bool EventClassifier::has_edge(VertexKey u, VertexKey v) const {
  const auto at_u = neighbours_.find(u);
  const auto at_v = neighbours_.find(v);
  if (at_u == neighbours_.end() || at_v == neighbours_.end()) return false;
  // Scan the shorter list.
  const bool from_u = at_u->second.size() <= at_v->second.size();
  const std::vector<VertexKey>& list = from_u ? at_u->second : at_v->second;
  return std::find(list.begin(), list.end(), from_u ? v : u) != list.end();
}

void EventClassifier::erase_one(std::vector<VertexKey>& list, VertexKey key) {
  const auto at = std::find(list.begin(), list.end(), key);
  if (at == list.end()) return;
  *at = list.back();
  list.pop_back();
}

void count_matched(const Pool& pool, std::span<const Event> batch, EventTally& tally) {
  for (const Event& e : batch) {
    if (e.kind == EventKind::remove_vertex && pool.mate_of(e.u).has_value()) {
      ++tally.departures_matched;
    }
    // A new edge is never matched yet, so this counts drifts only.
    if (e.kind == EventKind::set_edge && pool.mate_of(e.u) == e.v) ++tally.drifts_on_matched;
  }
}

}  // namespace yoke::bench
