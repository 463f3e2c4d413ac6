// A certificate whose blossoms nest 9000 deep (docs/mathematics.md §8 reports depth ~9000 on real
// graphs): the checker must handle it without recursion and without per-vertex blossom lists
// (the memberships here total about 8 x 10^7).
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <random>
#include <unordered_set>
#include <vector>

#include "yoke/certificate.h"

namespace yoke {
namespace {

constexpr std::size_t kDepth = 9000;
constexpr std::size_t kVertices = 2 * kDepth + 1;

// Blossom k (k = 0 .. D-1) holds vertices 0 .. 2k+2: B_0 = {0, 1, 2} and
// B_k = {B_(k-1), 2k+1, 2k+2}, so level(v) = (v - 1) / 2 (level(0) = 0) is the innermost
// blossom holding v. Pairs 2k+1 -- 2k+2 fill every blossom; vertex 0, the base of all, is
// exposed. Duals: 2u = 2 except 2u(0) = 0, every 2z = 2. Two vertices meet first in
// B_max(level), and 2z summed from there outwards is 2 (D - max level).
std::size_t level(Vertex v) { return v == 0 ? 0 : (v - 1) / 2; }

Weight common_dual2(Vertex a, Vertex b) {
  return 2 * static_cast<Weight>(kDepth - std::max(level(a), level(b)));
}

Weight vertex_dual2(Vertex v) { return v == 0 ? 0 : 2; }

std::uint64_t pair_key(Vertex a, Vertex b) {
  return std::uint64_t{std::min(a, b)} << 32 | std::max(a, b);
}

struct Deep {
  Graph graph;
  Certificate cert;
  Int128 objective2 = 0;
};

Deep deep_chain() {
  Deep deep;
  Certificate& cert = deep.cert;
  cert.mate.assign(kVertices, kNoVertex);
  cert.vertex_dual2.resize(kVertices);
  for (Vertex v = 0; v < kVertices; ++v) cert.vertex_dual2[v] = vertex_dual2(v);
  for (std::size_t k = 0; k < kDepth; ++k) {
    const auto a = static_cast<Vertex>(2 * k + 1);
    const auto inner = k == 0 ? NodeId{0} : static_cast<NodeId>(kVertices + k - 1);
    cert.blossoms.push_back({{inner, a, a + 1}, 2, 0});
    cert.mate[a] = a + 1;
    cert.mate[a + 1] = a;
  }

  auto tight = [](Vertex a, Vertex b) {
    return (vertex_dual2(a) + vertex_dual2(b) + common_dual2(a, b)) / 2;
  };
  std::vector<Edge> edges;
  for (std::size_t k = 0; k < kDepth; ++k) {
    const auto a = static_cast<Vertex>(2 * k + 1);
    edges.push_back({a, a + 1, tight(a, a + 1)});      // matched
    edges.push_back({a - 1, a, tight(a - 1, a) - 1});  // into the inner blossom
    edges.push_back({a + 1, 0, tight(a + 1, 0)});      // back to the base
    deep.objective2 += 2 * Int128{tight(a, a + 1)};
  }
  // Long-range edges across levels, feasible with random slack; no pair twice.
  std::unordered_set<std::uint64_t> seen;
  for (const Edge& e : edges) seen.insert(pair_key(e.a, e.b));
  std::mt19937_64 random(7);
  for (int i = 0; i < 200000; ++i) {
    const auto a = static_cast<Vertex>(random() % kVertices);
    const auto b = static_cast<Vertex>(random() % kVertices);
    if (a == b || !seen.insert(pair_key(a, b)).second) continue;
    edges.push_back({a, b, tight(a, b) - static_cast<Weight>(random() % 3)});
  }
  deep.graph = Graph::from_edges(kVertices, std::move(edges));
  return deep;
}

TEST(CertificateDeep, NineThousandNestedBlossomsAreCheckedQuickly) {
  const Deep deep = deep_chain();
  const CheckResult result = check_certificate(deep.graph, deep.cert);
  EXPECT_TRUE(result.ok) << result.failure;
  EXPECT_TRUE(result.dual_objective2 == deep.objective2);
}

TEST(CertificateDeep, InfeasibleEdgeAtTheBottomIsNamed) {
  Deep deep = deep_chain();
  // Edge 1-2 (index 0) lies in all 9000 blossoms: 2z over them is 18000. Raise its weight by 1.
  std::vector<Edge> edges = deep.graph.edges();
  edges[0].w += 1;
  deep.graph = Graph::from_edges(kVertices, std::move(edges));
  const CheckResult result = check_certificate(deep.graph, deep.cert);
  EXPECT_FALSE(result.ok);
  EXPECT_NE(result.failure.find("edge 1-2 (index 0, w 9003) has negative slack -2 (2u: 2 + 2, "
                                "2z of blossoms holding both ends: 18000, 2w: 18006)"),
            std::string::npos)
      << result.failure;
}

TEST(CertificateDeep, OuterBlossomNotFullIsFound) {
  Deep deep = deep_chain();
  // Unmatch the outermost pair: the outer blossom loses a pair, every inner one stays full.
  const auto a = static_cast<Vertex>(2 * kDepth - 1);
  deep.cert.mate[a] = kNoVertex;
  deep.cert.mate[a + 1] = kNoVertex;
  deep.cert.vertex_dual2[a] = 0;
  deep.cert.vertex_dual2[a + 1] = 0;
  // Exposed, their duals must drop to 0, which would make their edges infeasible; drop those
  // edges from the graph as well, so that fullness is the only violation left.
  std::vector<Edge> edges;
  for (const Edge& e : deep.graph.edges()) {
    if (e.a != a && e.b != a && e.a != a + 1 && e.b != a + 1) edges.push_back(e);
  }
  deep.graph = Graph::from_edges(kVertices, std::move(edges));
  const CheckResult result = check_certificate(deep.graph, deep.cert);
  EXPECT_FALSE(result.ok);
  EXPECT_NE(result.failure.find("blossom 8999 (node 27000) has 2z = 2 > 0 but is not full: it "
                                "holds 8999 matched edges, a full blossom of 18001 vertices "
                                "holds 9000"),
            std::string::npos)
      << result.failure;
}

}  // namespace
}  // namespace yoke
