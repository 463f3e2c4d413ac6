#include "solver/greedy_start.h"

#include <algorithm>

namespace yoke {

void greedy_start(const Graph& graph, Weight weight_offset, MatchingState& state) {
  const std::size_t n = graph.vertex_count();
  auto weight = [&](EdgeIndex e) { return graph.edge(e).w + weight_offset; };
  // 2u(v) = the largest weight at v: every edge then has 2u(a) + 2u(b) >= 2w.
  for (Vertex v = 0; v < n; ++v) {
    Weight best = 0;
    for (const Incidence& inc : graph.incident(v)) best = std::max(best, weight(inc.edge));
    state.dual2[v] = best;
  }
  // Lower each dual, in turn, to the least feasible value. Afterwards every vertex with a
  // positive dual has a tight edge: a neighbour lowered later cannot go below the value that
  // keeps that edge tight.
  for (Vertex v = 0; v < n; ++v) {
    Weight need = 0;
    for (const Incidence& inc : graph.incident(v)) {
      need = std::max(need, 2 * weight(inc.edge) - state.dual2[inc.other]);
    }
    state.dual2[v] = need;
  }
  // A maximal matching of tight edges; exposed vertices with positive duals are the roots.
  for (Vertex v = 0; v < n; ++v) {
    if (state.mate[v] != kNoVertex || state.dual2[v] == 0) continue;
    for (const Incidence& inc : graph.incident(v)) {
      if (state.mate[inc.other] != kNoVertex) continue;
      if (state.dual2[v] + state.dual2[inc.other] == 2 * weight(inc.edge)) {
        state.mate.set(v, inc.other);
        state.mate.set(inc.other, v);
        break;
      }
    }
  }
}

}  // namespace yoke
