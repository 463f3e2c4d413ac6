// The diff of a commit from the mate journal: every vertex whose mate was written during the
// commit, with the mate it had before. O(vertices written + pairs changed x log).
#include <algorithm>

#include "pool_state.h"

namespace yoke {
namespace {

MatchedPair by_key(const PoolGraph& graph, Vertex a, Vertex b, Weight w) {
  const VertexKey ka = graph.key(a);
  const VertexKey kb = graph.key(b);
  return {std::min(ka, kb), std::max(ka, kb), w};
}

auto pair_order = [](const MatchedPair& x, const MatchedPair& y) {
  return x.a != y.a ? x.a < y.a : x.b < y.b;
};

// A vertex that left and came back within the batch has a new slot, so a pair it kept shows up
// as removed under the old slot and added under the new one: by keys it never changed.
void drop_kept_pairs(MatchingDiff& diff) {
  std::vector<MatchedPair> removed;
  std::vector<MatchedPair> added;
  auto r = diff.removed.begin();
  auto a = diff.added.begin();
  while (r != diff.removed.end() || a != diff.added.end()) {
    if (a == diff.added.end() || (r != diff.removed.end() && pair_order(*r, *a))) {
      removed.push_back(*r++);
    } else if (r == diff.removed.end() || pair_order(*a, *r)) {
      added.push_back(*a++);
    } else {
      ++r;
      ++a;
    }
  }
  diff.removed = std::move(removed);
  diff.added = std::move(added);
}

}  // namespace

MatchingDiff collect_diff(PoolState& pool) {
  const Mates& mate = pool.matching.mate;
  const Graph& graph = pool.graph.graph();
  auto weight_now = [&](Vertex a, Vertex b) { return graph.edge(pool.graph.find_edge(a, b)).w; };
  auto weight_then = [&](Vertex a, Vertex b) {
    const auto it = pool.weight_before.find(slot_pair(a, b));
    return it != pool.weight_before.end() ? it->second : weight_now(a, b);
  };
  MatchingDiff diff;
  // Each changed pair appears in the journal from both ends: report it from the lower slot.
  for (const Mates::Change& change : mate.journal()) {
    const Vertex v = change.vertex;
    const Vertex after = mate[v];
    if (change.before == after) continue;
    if (change.before != kNoVertex && v < change.before) {
      const Weight w = weight_then(v, change.before);
      diff.removed.push_back(by_key(pool.graph, v, change.before, w));
      pool.weight -= w;
      --pool.pairs;
    }
    if (after != kNoVertex && v < after) {
      const Weight w = weight_now(v, after);
      diff.added.push_back(by_key(pool.graph, v, after, w));
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
  std::sort(diff.removed.begin(), diff.removed.end(), pair_order);
  std::sort(diff.added.begin(), diff.added.end(), pair_order);
  drop_kept_pairs(diff);
  return diff;
}

}  // namespace yoke
