#include "tools/bench/yoke_runner.h"

#include <string>

#include "yoke/certificate.h"
#include "yoke/solve.h"
#include "tools/bench/heap_counter.h"
#include "tools/bench/stopwatch.h"

namespace yoke::bench {
namespace {

// The weight and size of `mate` as a matching of `graph`, summed here so that the comparison
// with LEMON does not rest on the solver's own bookkeeping. Sets a failure when `mate` is not
// a matching of the graph.
void resum(const Graph& graph, const std::vector<Vertex>& mate, SolverRun& run) {
  if (mate.size() != graph.vertex_count()) {
    run.valid = false;
    run.failure = "mate has " + std::to_string(mate.size()) + " entries for " +
                  std::to_string(graph.vertex_count()) + " vertices";
    return;
  }
  std::size_t matched_vertices = 0;
  for (Vertex v = 0; v < mate.size(); ++v) {
    if (mate[v] == kNoVertex) continue;
    if (mate[v] >= mate.size() || mate[mate[v]] != v) {
      run.valid = false;
      run.failure = "mate is not symmetric at vertex " + std::to_string(v);
      return;
    }
    ++matched_vertices;
  }
  Weight sum = 0;
  std::size_t pairs = 0;
  for (const Edge& e : graph.edges()) {
    if (mate[e.a] == e.b) {
      sum += e.w;
      ++pairs;
    }
  }
  if (2 * pairs != matched_vertices) {
    run.valid = false;
    run.failure = "mate pairs vertices that share no edge";
  } else if (sum != run.weight || pairs != run.pairs) {
    run.valid = false;
    run.failure = "reported weight " + std::to_string(run.weight) + " / pairs " +
                  std::to_string(run.pairs) + " but the mate array sums to " +
                  std::to_string(sum) + " / " + std::to_string(pairs);
  }
}

}  // namespace

SolverRun run_yoke(const gen::GeneratedGraph& input) {
  SolverRun run;
  heap::reset_peak();
  const std::size_t baseline = heap::live_bytes();
  {
    const Graph graph = input.to_graph();  // the solver's own graph counts as its memory
    const Stopwatch watch;
    const SolveResult result = solve(graph, Mode::max_weight);
    run.solve_ms = watch.elapsed_ms();
    run.solve_cpu_ms = watch.cpu_ms();
    run.peak_bytes = heap::peak_above(baseline);
    run.weight = result.weight;
    run.pairs = result.pairs;

    run.checked = true;
    resum(graph, result.mate, run);
    if (run.valid) {
      const CheckResult check = check_certificate(graph, result.certificate);
      if (!check.ok) {
        run.valid = false;
        run.failure = "certificate does not hold: " + check.failure;
      }
    }
  }
  return run;
}

}  // namespace yoke::bench
