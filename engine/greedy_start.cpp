#include "greedy_start.h"

#include <algorithm>

namespace yoke {

void greedy_start(const Graph& graph, Weight weight_offset, MatchingState& state) {
  const std::size_t n = graph.vertex_count();
  for (Vertex v = 0; v < n; ++v) {
    Weight best = 0;
    for (const Incidence& inc : graph.incident(v)) {
      best = std::max(best, graph.edge(inc.edge).w + weight_offset);
    }
    state.dual2[v] = best;
  }
  for (Vertex v = 0; v < n; ++v) {
    if (state.mate[v] != kNoVertex || state.dual2[v] == 0) continue;
    // The lowest feasible dual for v: every edge {v, x} needs 2u(v) >= 2w - 2u(x).
    Weight need = 0;
    for (const Incidence& inc : graph.incident(v)) {
      need = std::max(need, 2 * (graph.edge(inc.edge).w + weight_offset) - state.dual2[inc.other]);
    }
    state.dual2[v] = need;
    if (need == 0) continue;
    for (const Incidence& inc : graph.incident(v)) {
      const Weight slack = need + state.dual2[inc.other] - 2 * (graph.edge(inc.edge).w + weight_offset);
      if (slack == 0 && state.mate[inc.other] == kNoVertex) {
        state.mate[v] = inc.other;
        state.mate[inc.other] = v;
        break;
      }
    }
  }
}

}  // namespace yoke
