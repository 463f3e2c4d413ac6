// yoke against exhaustive enumeration: every matching of the graph is visited, so the optimum is
// known without trusting any matching algorithm.
#include <gtest/gtest.h>

#include <vector>

#include "checked_solve.h"
#include "exhaustive.h"
#include "random_graphs.h"
#include "test_scale.h"
#include "tests/oracles/all_modes.h"

namespace yoke::oracle {
namespace {


// Enumerates once per graph and answers all three modes from it.
void expect_all_modes(const Graph& graph, const std::string& label) {
  const ExhaustiveOptima truth = exhaustive_optima(graph);
  const Oracle oracle = [&truth](const Graph&, Mode mode) { return truth.for_mode(mode); };
  for (Mode mode : kAllModes) expect_optimal(graph, mode, oracle, label);
}

// oracle: exhaustive enumeration. Random graphs of 1..12 vertices with mixed-sign, zero,
// all-equal and negative weights, sparse to complete, some with isolated vertices.
TEST(ExhaustiveEnumeration, RandomSmallGraphsAllModes) {
  const int seeds = scaled(5);
  for (const RandomGraphSpec& spec : small_random_specs(12)) {
    for (int seed = 0; seed < seeds; ++seed) {
      const Graph graph = random_graph(spec, 1000 + static_cast<std::uint64_t>(seed));
      expect_all_modes(graph, "exhaustive_" + spec.describe() + "_seed" + std::to_string(seed));
      if (HasFailure()) return;  // one reproducer is enough
    }
  }
}

// Every labelled graph on n vertices, one bit per vertex pair, with weights from `weight_of`.
template <class WeightOf>
void sweep_every_graph(std::size_t n, int stride, const std::string& name, WeightOf weight_of) {
  std::vector<std::pair<Vertex, Vertex>> pairs;
  for (Vertex a = 0; a < n; ++a) {
    for (Vertex b = a + 1; b < n; ++b) pairs.push_back({a, b});
  }
  const std::uint64_t graphs = std::uint64_t{1} << pairs.size();
  for (std::uint64_t mask = 0; mask < graphs; mask += static_cast<std::uint64_t>(stride)) {
    std::vector<Edge> edges;
    for (std::size_t k = 0; k < pairs.size(); ++k) {
      if (mask >> k & 1U) edges.push_back({pairs[k].first, pairs[k].second, weight_of(mask, k)});
    }
    expect_all_modes(Graph::from_edges(n, std::move(edges)),
                     name + "_n" + std::to_string(n) + "_mask" + std::to_string(mask));
    if (testing::Test::HasFailure()) return;
  }
}

// oracle: exhaustive enumeration, over every graph on up to 6 vertices with unit weights (the
// pure cardinality structure: every odd-cycle and blossom configuration that small).
TEST(ExhaustiveEnumeration, EveryGraphUpTo6VerticesUnitWeights) {
  for (std::size_t n = 1; n <= 6; ++n) {
    sweep_every_graph(n, n == 6 && small_scale() ? 5 : 1, "every_unit",
                      [](std::uint64_t, std::size_t) { return Weight{1}; });
  }
}

// oracle: exhaustive enumeration, over every graph on up to 6 vertices with weights in
// [-2, 4] mixed by a hash of the graph and the pair: ties, zeros and negatives together.
TEST(ExhaustiveEnumeration, EveryGraphUpTo6VerticesMixedWeights) {
  const auto weight_of = [](std::uint64_t mask, std::size_t pair) {
    std::uint64_t h = mask * 0x9E3779B97F4A7C15ULL + pair * 0xBF58476D1CE4E5B9ULL;
    h ^= h >> 31;
    h *= 0x94D049BB133111EBULL;
    h ^= h >> 29;
    return static_cast<Weight>(h % 7) - 2;
  };
  for (std::size_t n = 1; n <= 6; ++n) {
    sweep_every_graph(n, n == 6 && small_scale() ? 5 : 1, "every_mixed", weight_of);
  }
}

}  // namespace
}  // namespace yoke::oracle
