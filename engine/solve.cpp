#include "solve.h"

namespace yoke {
SolveResult solve(const Graph& graph, Mode) {
  SolveResult r;
  r.mate.assign(graph.vertex_count(), kNoVertex);
  return r;
}
Weight mode_weight_offset(const Graph&, Mode) { return 0; }
}  // namespace yoke
