// The phantom vertex seen from outside the engine (docs/mathematics.md §9): whatever leaves
// the pool (a certificate, saved bytes) is about G alone, so it is made from a copy of the
// state with φ taken out and its mate's tree grown again. A cost per export, not per event.
#include <algorithm>
#include <cstdlib>

#include "pool/pool_state.h"

namespace yoke {

bool phantom_switched_on() {
  // On unless YOKE_PHANTOM=0 (read once per pool): the tests run every pool test again without
  // it, so that pools with a churn bonus or held pairs, which never use it, keep the same code
  // covered in odd pools. A replay takes the same choices only under the same setting.
  const char* value = std::getenv("YOKE_PHANTOM");
  return value == nullptr || value[0] != '0';
}

namespace {

// A copy of the matching state with φ (present) taken out and its mate's tree grown again.
MatchingState state_without_phantom(const PoolState& pool) {
  MatchingState state = pool.matching;
  const Vertex phi = pool.phantom;
  BlossomForest& forest = state.forest;
  Mates& mate = state.mate;
  const Graph& graph = pool.graph.graph();
  std::vector<Vertex> roots;
  auto dual = [&](Vertex v) { return state.dual2[v] + forest.owed_dual2(v); };
  auto unmatch = [&](Vertex a, Vertex b) {
    mate.set(a, kNoVertex);
    mate.set(b, kNoVertex);
    roots.push_back(a);
    roots.push_back(b);
  };
  if (forest.parent(phi) != kNoNode) {
    // As a departure: every blossom holding φ goes, and a base whose matched edge lost its
    // tightness gives it up. The bases' mates lie outside the dissolved blossoms' remains.
    std::vector<Vertex> bases;
    forest.dissolve_path(forest.parent(phi), state.dual2, bases);
    for (const Vertex b : bases) {
      const Vertex m = mate[b];
      if (m == kNoVertex) {
        roots.push_back(b);
        continue;
      }
      const Weight w2 = b == phi || m == phi
                            ? 2 * pool.weight_offset
                            : pool.weight2(pool.graph.find_edge(b, m));
      if (dual(b) + dual(m) - w2 > 0) unmatch(b, m);
    }
  }
  if (mate[phi] != kNoVertex) unmatch(phi, mate[phi]);
  forest.flush_pending(state.dual2);
  state.dual2[phi] = 0;
  std::sort(roots.begin(), roots.end());
  roots.erase(std::unique(roots.begin(), roots.end()), roots.end());
  AlternatingSearch search(graph, pool.weight_offset, state);
  for (const Weight parity : {0, 1}) {
    bool any = false;
    for (const Vertex v : roots) {
      if (v == phi || mate[v] != kNoVertex || state.dual2[v] == 0 || state.dual2[v] % 2 != parity) {
        continue;
      }
      search.add_root(v);
      any = true;
    }
    if (any) search.run();
  }
  return state;
}

}  // namespace

void join_every_price(PoolState& pool) {
  for (Vertex v = 0; v < pool.graph.capacity(); ++v) {
    if (pool.graph.alive(v)) pool.prices.join(v, pool.matching.dual2[v]);
  }
}

const MatchingState& certified_state(const PoolState& pool) {
  if (pool.phantom == kNoVertex) return pool.matching;
  if (!pool.without_phantom) pool.without_phantom = state_without_phantom(pool);
  return *pool.without_phantom;
}

}  // namespace yoke
