// The diff of a commit from the mate journal: every vertex whose mate was written during the
// commit, with the mate it had before and the event each change goes back to.
// O(vertices written + pairs changed x log).
#include <algorithm>

#include "pool/pool_state.h"

namespace yoke {
namespace {

struct Change {
  MatchedPair pair;
  EventCause cause;
};

Change by_key(const PoolGraph& graph, Vertex a, Vertex b, Weight w, EventCause cause) {
  const VertexKey ka = graph.key(a);
  const VertexKey kb = graph.key(b);
  return {{std::min(ka, kb), std::max(ka, kb), w}, cause};
}

auto pair_order = [](const Change& x, const Change& y) {
  return x.pair.a != y.pair.a ? x.pair.a < y.pair.a : x.pair.b < y.pair.b;
};

// A vertex that left and came back within the batch has a new slot, so a pair it kept shows up
// as removed under the old slot and added under the new one: by keys it never changed.
void drop_kept_pairs(std::vector<Change>& removed, std::vector<Change>& added, MatchingDiff& diff) {
  auto keep = [](std::vector<MatchedPair>& pairs, std::vector<EventCause>& causes, const Change& c) {
    pairs.push_back(c.pair);
    causes.push_back(c.cause);
  };
  auto r = removed.begin();
  auto a = added.begin();
  while (r != removed.end() || a != added.end()) {
    if (a == added.end() || (r != removed.end() && pair_order(*r, *a))) {
      keep(diff.removed, diff.removed_cause, *r++);
    } else if (r == removed.end() || pair_order(*a, *r)) {
      keep(diff.added, diff.added_cause, *a++);
    } else {
      ++r;
      ++a;
    }
  }
}

}  // namespace

MatchingDiff collect_diff(PoolState& pool) {
  const Mates& mate = pool.matching.mate;
  // Own weights, without the churn bonus: between commits the bonus sits on the matching.
  auto weight_now = [&](Vertex a, Vertex b) { return pool.own_weight(a, b, pool.graph.find_edge(a, b)); };
  auto weight_then = [&](Vertex a, Vertex b) {
    const auto it = pool.weight_before.find(slot_pair(a, b));
    return it != pool.weight_before.end() ? it->second : weight_now(a, b);
  };
  std::vector<Change> removed;
  std::vector<Change> added;
  // Each changed pair appears in the journal from both ends: report it from the lower slot.
  for (const Mates::Change& change : mate.journal()) {
    const Vertex v = change.vertex;
    const Vertex after = mate[v];
    if (change.before == after) continue;
    // φ's pairs are the pool's inside: G's diff has none of them (a vertex may go from φ to a
    // vertex of G: only its added pair counts).
    const bool phantoms = !pool.phantom_slots.empty();
    if (phantoms && pool.is_phantom_slot(v)) continue;
    if (change.before != kNoVertex && v < change.before &&
        !(phantoms && pool.is_phantom_slot(change.before))) {
      const Weight w = weight_then(v, change.before);
      removed.push_back(by_key(pool.graph, v, change.before, w, change.first_cause));
      pool.weight -= w;
      --pool.pairs;
    }
    if (after != kNoVertex && v < after && !(phantoms && pool.is_phantom_slot(after))) {
      const Weight w = weight_now(v, after);
      added.push_back(by_key(pool.graph, v, after, w, mate.last_cause(v)));
      pool.weight += w;
      ++pool.pairs;
    }
  }
  // Pairs that stayed matched while their weight changed move the objective too.
  for (const auto& [pair, w] : pool.weight_before) {
    const auto a = static_cast<Vertex>(pair >> 32);
    const auto b = static_cast<Vertex>(pair & 0xffffffffu);
    if (mate.before(a) == b && mate[a] == b) pool.weight += weight_now(a, b) - w;
  }
  // The holds the batch made or ended: pairs by keys, outside the mate journal.
  for (const auto& [pair, touch] : pool.holds_touched) {
    const bool now = pool.holds.is_pair(pair.first, pair.second);
    if (touch.was_held && !now) removed.push_back({{pair.first, pair.second, touch.weight_before}, touch.cause});
    if (!touch.was_held && now) {
      added.push_back({{pair.first, pair.second, *pool.holds.aside_weight(pair.first, pair.second)}, touch.cause});
    }
  }
  std::sort(removed.begin(), removed.end(), pair_order);
  std::sort(added.begin(), added.end(), pair_order);
  MatchingDiff diff;
  drop_kept_pairs(removed, added, diff);
  return diff;
}

}  // namespace yoke
