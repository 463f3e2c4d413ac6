// Randomized soundness test of check_certificate on graphs of at most 9 vertices.
//
// Correct certificates are built backwards: first a random blossom family, a matching that
// fills every blossom, and random duals; then edge weights that make the matched edges tight and
// every other edge feasible. The checker must accept these, and their objective must equal the
// optimum found by exhaustive enumeration. Then mutated and random (mate, duals) candidates are
// fed to the checker: whatever it accepts must be a matching of optimum weight.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <numeric>
#include <random>
#include <vector>

#include "yoke/certificate.h"
#include "tests/engine/certificate_test_util.h"

namespace yoke {
namespace {

using certtest::brute_force_optimum;
using certtest::matching_weight;

class Random {
 public:
  explicit Random(std::uint64_t seed) : engine_(seed) {}
  // Uniform in [lo, hi]; modulo bias is irrelevant here, determinism across libraries is not.
  std::int64_t between(std::int64_t lo, std::int64_t hi) {
    return lo + static_cast<std::int64_t>(engine_() % static_cast<std::uint64_t>(hi - lo + 1));
  }
  // Uniform index in [0, count); count > 0.
  std::size_t index(std::size_t count) { return static_cast<std::size_t>(engine_() % count); }
  bool chance(int percent) { return between(1, 100) <= percent; }
  template <class T>
  void shuffle(std::vector<T>& items) {
    for (std::size_t i = items.size(); i > 1; --i) std::swap(items[i - 1], items[index(i)]);
  }

 private:
  std::mt19937_64 engine_;
};

struct Instance {
  Graph graph;
  Certificate cert;
};

// 2z summed over the blossoms holding both u and v, for a certificate whose forest is valid.
// Walks parent links per vertex; fine for a handful of vertices.
std::vector<Weight> common_dual2(const Certificate& cert, std::size_t n) {
  const std::size_t nodes = n + cert.blossoms.size();
  std::vector<NodeId> parent(nodes, kNoVertex);
  for (std::size_t k = 0; k < cert.blossoms.size(); ++k) {
    for (const NodeId child : cert.blossoms[k].children) parent[child] = static_cast<NodeId>(n + k);
  }
  std::vector<std::vector<bool>> holds(n, std::vector<bool>(nodes, false));
  for (std::size_t v = 0; v < n; ++v) {
    for (NodeId up = parent[v]; up != kNoVertex; up = parent[up]) holds[v][up] = true;
  }
  std::vector<Weight> common(n * n, 0);
  for (std::size_t u = 0; u < n; ++u) {
    for (std::size_t v = 0; v < n; ++v) {
      for (std::size_t k = 0; k < cert.blossoms.size(); ++k) {
        if (holds[u][n + k] && holds[v][n + k]) common[u * n + v] += cert.blossoms[k].dual2;
      }
    }
  }
  return common;
}

Instance certified_instance(Random& random, Mode mode) {
  const auto n = static_cast<std::size_t>(mode == Mode::perfect ? 2 * random.between(1, 4)
                                                                : random.between(1, 9));
  Certificate cert;
  cert.mode = mode;
  cert.weight_offset = mode == Mode::max_cardinality ? random.between(0, 20) : 0;
  cert.mate.assign(n, kNoVertex);

  // Blossoms from an odd number of top-level nodes; pairing the bases of children 1-2, 3-4
  // fills the new blossom, whose base is child 0's base. Top-level nodes all have odd size.
  std::vector<NodeId> tops(n);
  std::iota(tops.begin(), tops.end(), NodeId{0});
  std::vector<Vertex> base(n);
  std::iota(base.begin(), base.end(), Vertex{0});
  auto pair_up = [&](NodeId a, NodeId b) {
    cert.mate[base[a]] = base[b];
    cert.mate[base[b]] = base[a];
  };
  const auto rounds = random.between(0, 3);
  for (int r = 0; r < rounds && tops.size() >= 3; ++r) {
    const std::size_t k = tops.size() >= 5 && random.chance(40) ? 5 : 3;
    random.shuffle(tops);
    CertificateBlossom blossom;
    blossom.children.assign(tops.end() - static_cast<std::ptrdiff_t>(k), tops.end());
    tops.resize(tops.size() - k);
    for (std::size_t i = 1; i + 1 < k; i += 2)
      pair_up(blossom.children[i], blossom.children[i + 1]);
    blossom.base = base[blossom.children[0]];
    blossom.dual2 = random.chance(30) ? 0 : 2 * random.between(1, 3);
    const auto node = static_cast<NodeId>(n + cert.blossoms.size());
    base.push_back(blossom.base);
    tops.push_back(node);
    cert.blossoms.push_back(std::move(blossom));
  }
  random.shuffle(tops);
  for (std::size_t i = 0; i + 1 < tops.size(); i += 2) {
    if (mode == Mode::perfect || random.chance(75)) pair_up(tops[i], tops[i + 1]);
  }

  // Even duals keep every tight weight integral.
  cert.vertex_dual2.resize(n);
  for (std::size_t v = 0; v < n; ++v) {
    const bool exposed = cert.mate[v] == kNoVertex;
    cert.vertex_dual2[v] = mode == Mode::perfect ? 2 * random.between(-4, 4)
                           : exposed             ? 0
                                                 : 2 * random.between(0, 4);
  }

  const std::vector<Weight> common = common_dual2(cert, n);
  std::vector<Edge> edges;
  for (Vertex a = 0; a < n; ++a) {
    for (Vertex b = a + 1; b < n; ++b) {
      const bool matched = cert.mate[a] == b;
      if (!matched && !random.chance(60)) continue;
      const Weight tight = (cert.vertex_dual2[a] + cert.vertex_dual2[b] + common[a * n + b]) / 2;
      const Weight w = tight - (matched ? 0 : random.between(0, 3)) - cert.weight_offset;
      if (random.chance(50)) {
        edges.push_back({b, a, w});
      } else {
        edges.push_back({a, b, w});
      }
    }
  }
  random.shuffle(edges);
  return {Graph::from_edges(n, std::move(edges)), std::move(cert)};
}

// A random matching: edges in random order, each taken when both ends are free and a coin says so.
std::vector<Vertex> random_matching(Random& random, const Graph& graph) {
  std::vector<Edge> edges = graph.edges();
  random.shuffle(edges);
  std::vector<Vertex> mate(graph.vertex_count(), kNoVertex);
  for (const Edge& e : edges) {
    if (mate[e.a] == kNoVertex && mate[e.b] == kNoVertex && random.chance(70)) {
      mate[e.a] = e.b;
      mate[e.b] = e.a;
    }
  }
  return mate;
}

// Raises vertex duals until every edge is feasible, so that only complementary slackness
// can reject the candidate. Needs a valid blossom forest.
void make_feasible(Random& random, const Graph& graph, Certificate& cert) {
  const std::size_t n = graph.vertex_count();
  const std::vector<Weight> common = common_dual2(cert, n);
  for (Weight& u2 : cert.vertex_dual2) {
    if (cert.mode != Mode::perfect) u2 = std::max<Weight>(u2, 0);
  }
  for (const Edge& e : graph.edges()) {
    const Weight slack2 = cert.vertex_dual2[e.a] + cert.vertex_dual2[e.b] + common[e.a * n + e.b] -
                          2 * (e.w + cert.weight_offset);
    if (slack2 < 0) cert.vertex_dual2[random.chance(50) ? e.a : e.b] -= slack2;
  }
}

void mutate(Random& random, const Graph& graph, Certificate& cert) {
  const std::size_t n = graph.vertex_count();
  const std::size_t nodes = n + cert.blossoms.size();
  switch (random.between(0, 6)) {
    case 0:
      cert.mate = random_matching(random, graph);
      break;
    case 1: {  // unmatch one pair
      const auto v = static_cast<Vertex>(random.index(n));
      if (cert.mate[v] != kNoVertex) cert.mate[cert.mate[v]] = kNoVertex;
      cert.mate[v] = kNoVertex;
      break;
    }
    case 2:
      cert.vertex_dual2[random.index(n)] += random.between(-3, 3);
      break;
    case 3:
      if (!cert.blossoms.empty()) {
        cert.blossoms[random.index(cert.blossoms.size())].dual2 += random.between(-3, 3);
      }
      break;
    case 4:  // rewire one child of one blossom
      if (!cert.blossoms.empty()) {
        auto& children = cert.blossoms[random.index(cert.blossoms.size())].children;
        children[random.index(children.size())] = static_cast<NodeId>(random.index(nodes));
      }
      break;
    case 5:  // a new blossom over three random nodes
      if (nodes >= 3) {
        CertificateBlossom blossom;
        for (int i = 0; i < 3; ++i) {
          blossom.children.push_back(static_cast<NodeId>(random.index(nodes)));
        }
        blossom.dual2 = random.between(0, 4);
        cert.blossoms.push_back(std::move(blossom));
      }
      break;
    default:  // drop the last blossom (its children become roots, or its id dangles)
      if (!cert.blossoms.empty()) cert.blossoms.pop_back();
      break;
  }
}

void expect_never_accepts_suboptimal(Mode mode, std::uint64_t seed) {
  Random random(seed);
  int accepted_other_matchings = 0;
  int rejected = 0;
  for (int round = 0; round < 300; ++round) {
    const Instance instance = certified_instance(random, mode);
    const Graph& graph = instance.graph;
    const Certificate& good = instance.cert;
    SCOPED_TRACE("round " + std::to_string(round) + ", " + std::to_string(graph.vertex_count()) +
                 " vertices, " + std::to_string(graph.edge_count()) + " edges");

    // Source of truth: exhaustive enumeration of every matching.
    const auto optimum = brute_force_optimum(graph, mode, good.weight_offset);
    ASSERT_TRUE(optimum.has_value());

    const CheckResult verdict = check_certificate(graph, good);
    ASSERT_TRUE(verdict.ok) << verdict.failure;
    ASSERT_EQ(matching_weight(graph, good.mate, good.weight_offset), *optimum);
    ASSERT_TRUE(verdict.dual_objective2 == 2 * Int128{*optimum});

    for (int trial = 0; trial < 200; ++trial) {
      Certificate candidate = good;
      const int kind = static_cast<int>(random.between(0, 2));
      if (kind == 0) {  // a few random edits of a correct certificate
        const auto edits = random.between(1, 3);
        for (int i = 0; i < edits; ++i) mutate(random, graph, candidate);
      } else {  // a random matching with duals made feasible for it, on the same blossoms
        candidate.mate = random_matching(random, graph);
        for (Weight& u2 : candidate.vertex_dual2) {
          u2 = mode == Mode::perfect ? random.between(-8, 8) : random.between(0, 8);
        }
        for (auto& blossom : candidate.blossoms) blossom.dual2 = random.between(0, 6);
        if (kind == 2) make_feasible(random, graph, candidate);
      }
      const CheckResult result = check_certificate(graph, candidate);
      if (!result.ok) {
        ++rejected;
        continue;
      }
      ASSERT_EQ(matching_weight(graph, candidate.mate, candidate.weight_offset), *optimum)
          << "accepted a suboptimal matching (trial " << trial << ")";
      if (candidate.mate != good.mate) ++accepted_other_matchings;
    }
  }
  // The candidates are not all trivially rejected: other optimal matchings get through too.
  EXPECT_GT(rejected, 0);
  EXPECT_GT(accepted_other_matchings, 0);
}

TEST(CertificateRandom, MaxWeightNeverAcceptsASuboptimalMatching) {
  expect_never_accepts_suboptimal(Mode::max_weight, 1);
}

TEST(CertificateRandom, MaxCardinalityNeverAcceptsASuboptimalMatching) {
  expect_never_accepts_suboptimal(Mode::max_cardinality, 2);
}

TEST(CertificateRandom, PerfectNeverAcceptsASuboptimalMatching) {
  expect_never_accepts_suboptimal(Mode::perfect, 3);
}

}  // namespace
}  // namespace yoke
