#include "tools/bench/lemon_runner.h"

#include <vector>

#include "tools/bench/lemon_matching.h"

namespace yoke::bench {

SolverRun run_lemon(const gen::GeneratedGraph& input) {
  // The copy is made before LEMON's heap window opens: it stands for the input, as the
  // generated graph does for yoke.
  std::vector<LemonEdge> edges;
  edges.reserve(input.edges.size());
  for (const Edge& e : input.edges) edges.push_back({e.a, e.b, e.w});
  const LemonOutcome outcome = lemon_max_weight_matching(input.vertex_count, edges.data(), edges.size());

  SolverRun run;
  run.solve_ms = outcome.run_ms;
  run.solve_cpu_ms = outcome.run_cpu_ms;
  run.peak_bytes = outcome.peak_bytes;
  run.weight = outcome.weight;
  run.pairs = outcome.pairs;
  return run;
}

}  // namespace yoke::bench
