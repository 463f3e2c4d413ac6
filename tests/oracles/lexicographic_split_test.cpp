// The split certificate of docs/mathematics.md §9 (yoke::check_lexicographic_certificate):
// every max-cardinality and perfect pool result splits into class prices and weight prices that
// the checker accepts; the same prices with any other matching are accepted only when that
// matching is as good (exhaustive enumeration); every nudged price is refused. The rules one by
// one, on hand-built certificates, are in tests/engine/lexicographic_certificate_test.cpp.
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

}  // namespace
}  // namespace yoke
