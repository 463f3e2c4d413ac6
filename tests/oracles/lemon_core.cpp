// LEMON 1.3.1 calls std::allocator::construct, which C++20 removed: this file alone is compiled
// as C++17 and sees only plain edges (lemon_core.h), never the engine's C++20 headers.
#include "lemon_core.h"

#include <algorithm>
#include <cstdlib>
#include <stdexcept>
#include <string>
#include <vector>

// LEMON's headers are not written for -Wshadow -Wpedantic; keep our build clean.
#pragma GCC diagnostic push
#pragma GCC diagnostic ignored "-Wshadow"
#pragma GCC diagnostic ignored "-Wpedantic"
#pragma GCC diagnostic ignored "-Wunused-parameter"
#include <lemon/list_graph.h>
#include <lemon/matching.h>
#pragma GCC diagnostic pop

namespace yoke::oracle {
namespace {

using LemonWeights = lemon::ListGraph::EdgeMap<long long>;

// A LEMON copy of the graph: node i is yoke vertex i, edge k is yoke edge k.
struct LemonCopy {
  lemon::ListGraph graph;
  std::vector<lemon::ListGraph::Node> nodes;
  std::vector<lemon::ListGraph::Edge> edges;

  explicit LemonCopy(const PlainGraph& source) {
    graph.reserveNode(static_cast<int>(source.vertex_count));
    graph.reserveEdge(static_cast<int>(source.edges.size()));
    for (std::size_t v = 0; v < source.vertex_count; ++v) nodes.push_back(graph.addNode());
    for (const PlainEdge& e : source.edges) edges.push_back(graph.addEdge(nodes[e.a], nodes[e.b]));
  }
};

// Sums the original weights of the edges LEMON matched, so that the answer never relies on
// LEMON's own bookkeeping (or on offset arithmetic).
template <class Matching>
Answer resum(const PlainGraph& source, const LemonCopy& copy, const Matching& matching) {
  Answer answer;
  for (std::size_t k = 0; k < copy.edges.size(); ++k) {
    if (!matching.matching(copy.edges[k])) continue;
    answer.weight += source.edges[k].w;
    ++answer.pairs;
  }
  return answer;
}

Answer max_weight(const PlainGraph& source) {
  LemonCopy copy(source);
  LemonWeights weights(copy.graph);
  for (std::size_t k = 0; k < copy.edges.size(); ++k) {
    weights[copy.edges[k]] = source.edges[k].w;
  }
  lemon::MaxWeightedMatching<lemon::ListGraph, LemonWeights> matching(copy.graph, weights);
  matching.run();
  Answer answer = resum(source, copy, matching);
  if (answer.weight != matching.matchingWeight() ||
      answer.pairs != static_cast<std::size_t>(matching.matchingSize())) {
    throw std::logic_error("LEMON oracle: matchingWeight() or matchingSize() disagrees with "
                           "its matched edges");
  }
  return answer;
}

Answer perfect(const PlainGraph& source) {
  LemonCopy copy(source);
  LemonWeights weights(copy.graph);
  for (std::size_t k = 0; k < copy.edges.size(); ++k) {
    weights[copy.edges[k]] = source.edges[k].w;
  }
  lemon::MaxWeightedPerfectMatching<lemon::ListGraph, LemonWeights> matching(copy.graph,
                                                                             weights);
  if (!matching.run()) {
    Answer none;
    none.feasible = false;
    return none;
  }
  Answer answer = resum(source, copy, matching);
  if (2 * answer.pairs != source.vertex_count) {
    throw std::logic_error("LEMON oracle: a perfect matching that leaves vertices exposed");
  }
  return answer;
}

// Any (k+1)-pair matching must outweigh any k-pair matching after the offset: with
// |w| <= W and k <= n/2 that needs offset > (2k+1) W, so (n+1) W + 1 suffices.
long long cardinality_offset(const PlainGraph& source) {
  long long largest = 1;
  for (const PlainEdge& e : source.edges) largest = std::max(largest, std::llabs(e.w));
  const long long n = static_cast<long long>(source.vertex_count);
  // LEMON scales weights by 4 and sums a few of them; stay far from overflow.
  if (largest > (1LL << 56) / (8 * (n + 1))) {
    throw std::logic_error("LEMON oracle: weights too large for the max-cardinality offset");
  }
  return (n + 1) * largest + 1;
}

Answer max_cardinality(const PlainGraph& source) {
  LemonCopy copy(source);
  const long long offset = cardinality_offset(source);
  LemonWeights weights(copy.graph);
  for (std::size_t k = 0; k < copy.edges.size(); ++k) {
    weights[copy.edges[k]] = source.edges[k].w + offset;
  }
  lemon::MaxWeightedMatching<lemon::ListGraph, LemonWeights> matching(copy.graph, weights);
  matching.run();
  Answer answer = resum(source, copy, matching);
  lemon::MaxMatching<lemon::ListGraph> cardinality(copy.graph);
  cardinality.run();
  if (answer.pairs != static_cast<std::size_t>(cardinality.matchingSize())) {
    throw std::logic_error("LEMON oracle: MaxMatching size " +
                           std::to_string(cardinality.matchingSize()) +
                           " differs from the offset MaxWeightedMatching size " +
                           std::to_string(answer.pairs));
  }
  return answer;
}

}  // namespace

Answer lemon_optimum(const PlainGraph& graph, Mode mode) {
  switch (mode) {
    case Mode::max_weight: return max_weight(graph);
    case Mode::max_cardinality: return max_cardinality(graph);
    case Mode::perfect: return perfect(graph);
  }
  throw std::logic_error("LEMON oracle: unknown mode");
}

std::size_t lemon_max_cardinality(const PlainGraph& graph) {
  LemonCopy copy(graph);
  lemon::MaxMatching<lemon::ListGraph> cardinality(copy.graph);
  cardinality.run();
  return static_cast<std::size_t>(cardinality.matchingSize());
}

}  // namespace yoke::oracle
