#include "tools/bench/lemon_runner.h"

namespace yoke::bench {

SolverRun run_lemon(const gen::GeneratedGraph& input) {
  // The copy stands for the input, as the generated graph does for yoke.
  const std::vector<LemonEdge> edges = lemon_edges(input.edges);
  const LemonOutcome outcome = lemon_max_weight_matching(input.vertex_count, edges.data(), edges.size());

  SolverRun run;
  run.solve_ms = outcome.run_ms;
  run.solve_cpu_ms = outcome.run_cpu_ms;
  run.peak_bytes = outcome.peak_bytes;
  run.weight = outcome.weight;
  run.pairs = outcome.pairs;
  return run;
}

std::vector<LemonEdge> lemon_edges(const std::vector<Edge>& edges) {
  std::vector<LemonEdge> out;
  out.reserve(edges.size());
  for (const Edge& e : edges) out.push_back({e.a, e.b, e.w});
  return out;
}

}  // namespace yoke::bench
