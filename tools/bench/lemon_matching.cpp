// Compiled as C++17 (see lemon_matching.h).
#include "tools/bench/lemon_matching.h"

#include <lemon/config.h>
#include <lemon/list_graph.h>
#include <lemon/matching.h>

#include "tools/bench/heap_counter.h"
#include "tools/bench/stopwatch.h"

namespace yoke::bench {

LemonOutcome lemon_max_weight_matching(std::size_t vertex_count, const LemonEdge* edges,
                                       std::size_t edge_count) {
  using Weights = lemon::ListGraph::EdgeMap<long long>;
  LemonOutcome outcome;
  heap::reset_peak();
  const std::size_t baseline = heap::live_bytes();
  {
    lemon::ListGraph graph;
    graph.reserveNode(static_cast<int>(vertex_count));
    graph.reserveEdge(static_cast<int>(edge_count));
    // In a fresh ListGraph, ids are handed out 0, 1, 2, ... in insertion order, so node i is
    // vertex i and edge i is input edge i: no lookup vectors, which would inflate LEMON's
    // memory figure.
    for (std::size_t v = 0; v < vertex_count; ++v) graph.addNode();
    for (std::size_t i = 0; i < edge_count; ++i) {
      graph.addEdge(graph.nodeFromId(static_cast<int>(edges[i].a)),
                    graph.nodeFromId(static_cast<int>(edges[i].b)));
    }
    Weights weight(graph);
    for (std::size_t i = 0; i < edge_count; ++i) {
      weight[graph.edgeFromId(static_cast<int>(i))] = edges[i].w;
    }

    lemon::MaxWeightedMatching<lemon::ListGraph, Weights> matching(graph, weight);
    const Stopwatch watch;
    matching.run();
    outcome.run_ms = watch.elapsed_ms();
    outcome.run_cpu_ms = watch.cpu_ms();
    outcome.peak_bytes = heap::peak_above(baseline);
    outcome.weight = matching.matchingWeight();
    outcome.pairs = static_cast<std::size_t>(matching.matchingSize());
  }
  return outcome;
}

const char* lemon_version() { return LEMON_VERSION; }

}  // namespace yoke::bench
