// The split certificate of docs/mathematics.md §9 (yoke::check_lexicographic_certificate):
// every max-cardinality and perfect pool result splits into class prices and weight prices that
// the checker accepts; the same prices with any other matching are accepted only when that
// matching is as good (exhaustive enumeration); every nudged price is refused; hand-built
// prices refused for the rule each breaks (the first one passes every other rule and certifies
// a worse matching: without the sign rule a wrong answer would pass).
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <string>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "split_certificate.h"
#include "tools/graphgen/rng.h"

namespace yoke {
namespace {

// Every matching of a small graph.
void every_matching(const Graph& graph, std::vector<Vertex>& mate, Vertex v, std::vector<std::vector<Vertex>>& out) {
  const std::size_t n = graph.vertex_count();
  while (v < n && mate[v] != kNoVertex) ++v;
  if (v >= n) {
    out.push_back(mate);
    return;
  }
  every_matching(graph, mate, v + 1, out);
  for (const Incidence& inc : graph.incident(v)) {
    if (inc.other <= v || mate[inc.other] != kNoVertex) continue;
    mate[v] = inc.other;
    mate[inc.other] = v;
    every_matching(graph, mate, v + 1, out);
    mate[v] = mate[inc.other] = kNoVertex;
  }
}

struct Worth {
  std::size_t pairs = 0;
  Weight weight = 0;
  auto operator<=>(const Worth&) const = default;
};

Worth worth(const Graph& graph, const std::vector<Vertex>& mate) {
  Worth w;
  for (const Edge& e : graph.edges()) {
    if (mate[e.a] == e.b) {
      ++w.pairs;
      w.weight += e.w;
    }
  }
  return w;
}

// A small random pool committed in one batch; its export.
PoolExport random_pool(Mode mode, std::uint64_t seed) {
  gen::Rng rng(seed, 21);
  const auto n = static_cast<VertexKey>(rng.between(2, 9));
  const std::int64_t percent = rng.between(20, 70);
  std::vector<Event> batch;
  for (VertexKey a = 0; a < n; ++a) batch.push_back({EventKind::add_vertex, a, 0, 0});
  for (VertexKey a = 0; a < n; ++a) {
    for (VertexKey b = a + 1; b < n; ++b) {
      if (rng.between(1, 100) <= percent) batch.push_back({EventKind::set_edge, a, b, rng.between(-4, 12)});
    }
  }
  Pool pool(mode);
  pool.commit(batch);
  return pool.export_certified();
}

class SplitCertificate : public testing::TestWithParam<Mode> {};

TEST_P(SplitCertificate, AcceptsThePoolsOptimumAndNoWorseMatching) {
  std::size_t accepted = 0;
  std::size_t forged_rejected = 0;
  std::size_t forged_fewer_pairs = 0;
  for (std::uint64_t seed = 0; seed < 400; ++seed) {
    const PoolExport exported = random_pool(GetParam(), seed);
    const Graph& graph = exported.graph;
    const oracle::SplitOutcome split = oracle::split_certificate(graph, exported.certificate);
    ASSERT_TRUE(split.ok) << "seed " << seed << ": " << split.failure;
    const CheckResult check = check_lexicographic_certificate(graph, split.certificate);
    ASSERT_TRUE(check.ok) << "seed " << seed << ": " << check.failure;
    ++accepted;

    const Worth best = worth(graph, exported.certificate.mate);
    std::vector<Vertex> scratch(graph.vertex_count(), kNoVertex);
    std::vector<std::vector<Vertex>> all;
    every_matching(graph, scratch, 0, all);
    for (const auto& other : all) {
      const Worth w = worth(graph, other);
      ASSERT_LE(w, best) << "seed " << seed << ": the pool's matching is not the lexicographic optimum";
      LexicographicCertificate forged = split.certificate;
      forged.mate = other;
      const CheckResult verdict = check_lexicographic_certificate(graph, forged);
      if (w < best) {
        ASSERT_FALSE(verdict.ok) << "seed " << seed << ": a worse matching passed";
        ++forged_rejected;
        forged_fewer_pairs += w.pairs < best.pairs;
      }
    }
  }
  EXPECT_EQ(accepted, 400u);
  EXPECT_GT(forged_rejected, 2000u);
  EXPECT_GT(forged_fewer_pairs, 1000u);
}

TEST_P(SplitCertificate, RefusesEveryNudgedPrice) {
  std::size_t nudged = 0;
  for (std::uint64_t seed = 0; seed < 200; ++seed) {
    const PoolExport exported = random_pool(GetParam(), seed);
    const oracle::SplitOutcome split = oracle::split_certificate(exported.graph, exported.certificate);
    ASSERT_TRUE(split.ok) << split.failure;
    for (const Weight step : {Weight{-1}, Weight{1}}) {
      for (std::size_t v = 0; v < exported.graph.vertex_count(); ++v) {
        LexicographicCertificate c = split.certificate;
        c.weight_dual2[v] += step;
        EXPECT_FALSE(check_lexicographic_certificate(exported.graph, c).ok) << "seed " << seed << " vertex " << v;
        c = split.certificate;
        c.class_dual2[v] += step;
        EXPECT_FALSE(check_lexicographic_certificate(exported.graph, c).ok) << "seed " << seed << " vertex " << v;
        nudged += 2;
      }
      for (std::size_t b = 0; b < split.certificate.blossoms.size(); ++b) {
        LexicographicCertificate c = split.certificate;
        c.blossoms[b].weight_dual2 += step;
        EXPECT_FALSE(check_lexicographic_certificate(exported.graph, c).ok) << "seed " << seed << " blossom " << b;
        c = split.certificate;
        c.blossoms[b].class_dual2 += step;
        EXPECT_FALSE(check_lexicographic_certificate(exported.graph, c).ok) << "seed " << seed << " blossom " << b;
        nudged += 2;
      }
    }
  }
  EXPECT_GT(nudged, 2000u);
}

std::string mode_label(const testing::TestParamInfo<Mode>& param) {
  return param.param == Mode::perfect ? "perfect" : "max_cardinality";
}

INSTANTIATE_TEST_SUITE_P(Modes, SplitCertificate, testing::Values(Mode::max_cardinality, Mode::perfect), mode_label);

// Path 0 - 1 - 2 with w(0,1) = 5, w(1,2) = 1. Classes: D = {0, 2}, A = {1}. The optimum is
// {0-1}. The forged prices below certify {1-2} (weight 1) under every rule but one: vertex 2 is
// missable (class price 0) and has weight price -4. Without the sign rule a worse matching passes.
TEST(SplitCertificateRules, NegativePriceOnAMissableVertexIsRefused) {
  const Graph graph = Graph::from_edges(3, {{0, 1, 5}, {1, 2, 1}});
  LexicographicCertificate good;
  good.mate = {1, 0, kNoVertex};
  good.class_dual2 = {0, 2, 0};
  good.weight_dual2 = {0, 10, 0};
  const CheckResult ok = check_lexicographic_certificate(graph, good);
  ASSERT_TRUE(ok.ok) << ok.failure;
  EXPECT_EQ(ok.dual_objective2, 10);

  LexicographicCertificate forged = good;
  forged.mate = {kNoVertex, 2, 1};
  forged.weight_dual2 = {0, 10, -8};  // edge 0-1: 0 + 10 - 10 = 0; matched 1-2: 10 - 8 - 2 = 0;
                                      // objective 2 = 2 w({1-2}); exposed 0 at 0
  const CheckResult verdict = check_lexicographic_certificate(graph, forged);
  ASSERT_FALSE(verdict.ok);
  EXPECT_NE(verdict.failure.find("vertex 2 has weight dual 2u = -8 < 0 but class dual 2u = 0"), std::string::npos)
      << verdict.failure;
}

// Triangle 0, 1, 2 with weights -5 and a pendant 3 at 0 (w 1). {0-3, 1-2} is perfect, so
// every vertex is C (class price 1/2) and weight prices of any sign are allowed, as in perfect
// mode.
TEST(SplitCertificateRules, FreeSignWhereTheClassPriceIsPositive) {
  const Graph graph = Graph::from_edges(4, {{0, 1, -5}, {1, 2, -5}, {0, 2, -5}, {0, 3, 1}});
  LexicographicCertificate cert;
  cert.mode = Mode::perfect;
  cert.mate = {3, 2, 1, 0};
  cert.class_dual2 = {1, 1, 1, 1};
  // 2u: 0-3: 2 + 0 = 2; 1-2: -5 - 5 = -10; 0-1: 2 - 5 = -3 >= -10; 0-2 likewise.
  cert.weight_dual2 = {2, -5, -5, 0};
  const CheckResult ok = check_lexicographic_certificate(graph, cert);
  ASSERT_TRUE(ok.ok) << ok.failure;
  EXPECT_EQ(ok.dual_objective2, 2 * (1 - 5));
}

// An odd part of negative weights: triangle 0, 1, 2 (w -5), vertex 2 exposed. Every maximum
// matching takes one edge of it, so its price may be negative: 2z_w = -10 with a class price.
// Without the class price the class part fails (the triangle's edges are not covered).
TEST(SplitCertificateRules, NegativeBlossomPriceNeedsAClassPrice) {
  const Graph graph = Graph::from_edges(3, {{0, 1, -5}, {1, 2, -5}, {0, 2, -5}});
  LexicographicCertificate cert;
  cert.mate = {1, 0, kNoVertex};
  cert.class_dual2 = {0, 0, 0};
  cert.weight_dual2 = {0, 0, 0};
  cert.blossoms.push_back({{0, 1, 2}, 2, -10, 2});
  const CheckResult ok = check_lexicographic_certificate(graph, cert);
  ASSERT_TRUE(ok.ok) << ok.failure;
  EXPECT_EQ(ok.dual_objective2, -10);

  LexicographicCertificate forged = cert;
  forged.blossoms[0].class_dual2 = 0;  // no class price: the class part now fails the triangle
  const CheckResult verdict = check_lexicographic_certificate(graph, forged);
  ASSERT_FALSE(verdict.ok);
  EXPECT_EQ(verdict.failure.rfind("class part: ", 0), 0u) << verdict.failure;
}

// A 5-vertex bowtie 0-1-2-0, 0-3-4-0: one odd part, class price on the whole. A sub-blossom
// {0, 1, 2} without class price may not take a negative weight price.
TEST(SplitCertificateRules, NegativePriceOnAClassFreeBlossomIsRefused) {
  const Graph graph = Graph::from_edges(5, {{0, 1, 1}, {1, 2, 1}, {0, 2, 1}, {0, 3, 1}, {3, 4, 1}, {0, 4, 1}});
  LexicographicCertificate cert;
  cert.mate = {kNoVertex, 2, 1, 4, 3};
  cert.class_dual2 = {0, 0, 0, 0, 0};
  cert.weight_dual2 = {0, 0, 0, 0, 0};
  cert.blossoms.push_back({{0, 1, 2}, 0, 0, 0});
  cert.blossoms.push_back({{5, 3, 4}, 2, 2, 0});
  const CheckResult ok = check_lexicographic_certificate(graph, cert);
  ASSERT_TRUE(ok.ok) << ok.failure;
  cert.blossoms[0].weight_dual2 = -2;
  cert.weight_dual2 = {0, 1, 1, 0, 0};  // keeps 1-2 tight: 1 + 1 - 2 + 2 = 2
  const CheckResult verdict = check_lexicographic_certificate(graph, cert);
  ASSERT_FALSE(verdict.ok);
  EXPECT_NE(verdict.failure.find("blossom 0 (node 5) has weight dual 2z = -2 < 0 but class dual 2z = 0"),
            std::string::npos)
      << verdict.failure;
}

// An exposed vertex with a weight price is refused even when everything else holds.
TEST(SplitCertificateRules, ExposedVertexWithAPriceIsRefused) {
  const Graph graph = Graph::from_edges(3, {{0, 1, 5}, {1, 2, 1}});
  LexicographicCertificate cert;
  cert.mate = {1, 0, kNoVertex};
  cert.class_dual2 = {0, 2, 0};
  cert.weight_dual2 = {0, 10, 2};
  const CheckResult verdict = check_lexicographic_certificate(graph, cert);
  ASSERT_FALSE(verdict.ok);
  EXPECT_NE(verdict.failure.find("vertex 2 is exposed"), std::string::npos) << verdict.failure;
}

}  // namespace
}  // namespace yoke
