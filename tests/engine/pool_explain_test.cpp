// Pool::explain against the exported certificate: the price, the pair and every alternative's
// slack must be what the certificate's duals say (recomputed here by walking its blossoms).
#include <gtest/gtest.h>

#include <map>
#include <vector>

#include "yoke/pool.h"
#include "tools/graphgen/event_stream.h"

namespace yoke {
namespace {

TEST(PoolExplain, AgreesWithTheCertificate) {
  for (std::uint64_t seed = 1; seed <= 6; ++seed) {
    for (Mode mode : {Mode::max_weight, Mode::max_cardinality}) {
      const gen::StreamSpec spec = gen::test_stream_spec(
          seed % 2 == 0 ? gen::StreamFamily::stress : gen::StreamFamily::city, seed, 80, 15);
      Pool pool(mode);
      for (const auto& batch : gen::generate_stream(spec)) pool.commit(batch);
      const PoolExport out = pool.export_certified();
      const Certificate& cert = out.certificate;
      const std::size_t n = out.keys.size();
      std::vector<NodeId> parent(n + cert.blossoms.size(), kNoVertex);
      for (std::size_t k = 0; k < cert.blossoms.size(); ++k) {
        for (NodeId child : cert.blossoms[k].children) parent[child] = static_cast<NodeId>(n + k);
      }
      auto common_z2 = [&](Vertex a, Vertex b) {
        Weight z2 = 0;
        for (NodeId x = parent[a]; x != kNoVertex; x = parent[x]) {
          for (NodeId y = parent[b]; y != kNoVertex; y = parent[y]) {
            if (x == y) z2 += cert.blossoms[x - n].dual2;
          }
        }
        return z2;
      };
      for (Vertex v = 0; v < n; ++v) {
        const auto explained = pool.explain(out.keys[v], 1000);
        ASSERT_TRUE(explained.has_value());
        EXPECT_EQ(explained->dual2, cert.vertex_dual2[v]);
        EXPECT_EQ(explained->weight_offset, cert.weight_offset);
        EXPECT_EQ(explained->mate.has_value(), cert.mate[v] != kNoVertex);
        std::map<VertexKey, Weight> slack_of;
        for (const Incidence& inc : out.graph.incident(v)) {
          if (inc.other == cert.mate[v]) {
            EXPECT_EQ(*explained->mate, out.keys[inc.other]);
            EXPECT_EQ(explained->pair_weight, inc.w);
            continue;
          }
          slack_of[out.keys[inc.other]] = cert.vertex_dual2[v] + cert.vertex_dual2[inc.other] +
                                          common_z2(v, inc.other) - 2 * (inc.w + cert.weight_offset);
        }
        ASSERT_EQ(explained->alternatives.size(), slack_of.size());
        for (std::size_t i = 0; i < explained->alternatives.size(); ++i) {
          const Alternative& alt = explained->alternatives[i];
          EXPECT_EQ(alt.slack2, slack_of.at(alt.other));
          EXPECT_GE(alt.slack2, 0) << "a feasible dual leaves no edge with negative slack";
          if (i > 0) {
            EXPECT_LE(explained->alternatives[i - 1].slack2, alt.slack2);
          }
        }
      }
      EXPECT_FALSE(pool.explain(~VertexKey{0} - 12345).has_value());
    }
  }
}

TEST(PoolExplain, LimitKeepsTheClosest) {
  Pool pool(Mode::max_weight);
  std::vector<Event> batch;
  for (VertexKey k = 1; k <= 8; ++k) batch.push_back({EventKind::set_edge, 0, k, static_cast<Weight>(10 * k)});
  pool.commit(batch);
  const auto explained = pool.explain(0, 3);
  ASSERT_TRUE(explained.has_value());
  EXPECT_EQ(explained->mate, VertexKey{8});  // the heaviest edge wins (common knowledge: a star)
  ASSERT_EQ(explained->alternatives.size(), 3u);
  EXPECT_EQ(explained->alternatives[0].other, 7u);
  EXPECT_EQ(explained->alternatives[1].other, 6u);
  EXPECT_EQ(explained->alternatives[2].other, 5u);
}

}  // namespace
}  // namespace yoke
