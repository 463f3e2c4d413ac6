// Hand-built split certificates (docs/mathematics.md §9) for check_lexicographic_certificate:
// each correct one is accepted; each wrong one is refused with a message naming the rule it
// breaks. The first forged certificate passes every rule but the sign rule and certifies a
// worse matching (confirmed by enumeration): without that rule a wrong answer would pass.
// Prices are doubled: class 2u is 0 on D, 1 on C, 2 on A; a slack is 2u + 2u + 2z - 2w.
#include "yoke/certificate.h"

#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "tests/engine/certificate_test_util.h"

namespace yoke {
namespace {

constexpr Vertex kNone = kNoVertex;  // an exposed vertex's mate

// Large enough that one more pair outweighs any weight difference on these graphs.
constexpr Weight kPairWorth = 1000;

// Path 0 - 1 - 2 with w(0,1) = 5, w(1,2) = 1. Classes: D = {0, 2}, A = {1}. The optimum is
// {0-1}. The forged prices below certify {1-2} (weight 1) under every rule but one: vertex 2 is
// missable (class price 0) and has weight price -4. Without the sign rule a worse matching passes.
TEST(SplitCertificateRules, NegativePriceOnAMissableVertexIsRefused) {
  const Graph graph = Graph::from_edges(3, {{0, 1, 5}, {1, 2, 1}});
  LexicographicCertificate good;
  good.mate = {1, 0, kNone};
  good.class_dual2 = {0, 2, 0};
  good.weight_dual2 = {0, 10, 0};
  const CheckResult ok = check_lexicographic_certificate(graph, good);
  ASSERT_TRUE(ok.ok) << ok.failure;
  EXPECT_EQ(ok.dual_objective2, 10);

  LexicographicCertificate forged = good;
  forged.mate = {kNone, 2, 1};
  forged.weight_dual2 = {0, 10, -8};  // edge 0-1: 0 + 10 - 10 = 0; matched 1-2: 10 - 8 - 2 = 0;
                                      // objective 2 = 2 w({1-2}); exposed 0 at 0
  const CheckResult verdict = check_lexicographic_certificate(graph, forged);
  ASSERT_FALSE(verdict.ok);
  EXPECT_NE(verdict.failure.find("vertex 2 has weight dual 2u = -8 < 0 but class dual 2u = 0"), std::string::npos)
      << verdict.failure;
  // By enumeration: the best has one pair and weight 5; the forged matching weighs 1.
  EXPECT_EQ(certtest::brute_force_optimum(graph, Mode::max_cardinality, kPairWorth), kPairWorth + 5);
  EXPECT_EQ(certtest::matching_weight(graph, forged.mate, kPairWorth), kPairWorth + 1);
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
  cert.mate = {1, 0, kNone};
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
  cert.mate = {kNone, 2, 1, 4, 3};
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
  cert.mate = {1, 0, kNone};
  cert.class_dual2 = {0, 2, 0};
  cert.weight_dual2 = {0, 10, 2};
  const CheckResult verdict = check_lexicographic_certificate(graph, cert);
  ASSERT_FALSE(verdict.ok);
  EXPECT_NE(verdict.failure.find("vertex 2 is exposed"), std::string::npos) << verdict.failure;
}

// Edges that are not class-tight are not judged for weight. Leaves 0, 2 hang at 1 and 4, 5
// at 3: D = {0, 2, 4, 5}, A = {1, 3}, two pairs at most. Edge 1-3 (w 50) has class slack
// 2 + 2 - 2 > 0, and weight slack 2 + 2 - 100 < 0: allowed.
TEST(SplitCertificateRules, EdgesThatAreNotClassTightAreFree) {
  const Graph graph = Graph::from_edges(6, {{0, 1, 1}, {1, 2, 1}, {3, 4, 1}, {3, 5, 1}, {1, 3, 50}});
  LexicographicCertificate cert;
  cert.mate = {1, 0, kNone, 4, 3, kNone};
  cert.class_dual2 = {0, 2, 0, 2, 0, 0};
  cert.weight_dual2 = {0, 2, 0, 2, 0, 0};
  const CheckResult ok = check_lexicographic_certificate(graph, cert);
  ASSERT_TRUE(ok.ok) << ok.failure;
  EXPECT_EQ(ok.dual_objective2, 4);
  // Matching 1-3 alone weighs 50 but has one pair: the class part refuses it.
  LexicographicCertificate fewer = cert;
  fewer.mate = {kNone, 3, kNone, 1, kNone, kNone};
  const CheckResult verdict = check_lexicographic_certificate(graph, fewer);
  ASSERT_FALSE(verdict.ok);
  EXPECT_EQ(verdict.failure.rfind("class part: ", 0), 0u) << verdict.failure;
}

TEST(SplitCertificateRules, MatchedEdgeMustBeWeightTight) {
  const Graph graph = Graph::from_edges(3, {{0, 1, 5}, {1, 2, 1}});
  LexicographicCertificate cert;
  cert.mate = {1, 0, kNone};
  cert.class_dual2 = {0, 2, 0};
  cert.weight_dual2 = {2, 10, 0};  // 0-1: 2 + 10 - 10 = 2
  const CheckResult verdict = check_lexicographic_certificate(graph, cert);
  ASSERT_FALSE(verdict.ok);
  EXPECT_NE(verdict.failure.find("matched edge 0-1 (w 5) has weight slack 2"), std::string::npos) << verdict.failure;
}

// Triangle 0, 1, 2 with a pendant at each corner (3 at 0, 4 at 1, 5 at 2), every weight 1:
// the one perfect matching uses the pendants, so every vertex is C and the triangle holds no
// pair. A weight price on the triangle as a blossom is refused (not full), though every edge
// is feasible and tight where it must be.
TEST(SplitCertificateRules, WeightPricedBlossomMustBeFull) {
  const Graph graph =
      Graph::from_edges(6, {{0, 1, 1}, {1, 2, 1}, {0, 2, 1}, {0, 3, 1}, {1, 4, 1}, {2, 5, 1}});
  LexicographicCertificate cert;
  cert.mode = Mode::perfect;
  cert.mate = {3, 4, 5, 0, 1, 2};
  cert.class_dual2 = {1, 1, 1, 1, 1, 1};
  cert.weight_dual2 = {1, 1, 1, 1, 1, 1};
  const CheckResult ok = check_lexicographic_certificate(graph, cert);
  ASSERT_TRUE(ok.ok) << ok.failure;
  cert.weight_dual2 = {0, 0, 0, 2, 2, 2};
  cert.blossoms.push_back({{0, 1, 2}, 0, 2, kNone});  // triangle edges: 0 + 0 + 2 - 2 = 0
  const CheckResult verdict = check_lexicographic_certificate(graph, cert);
  ASSERT_FALSE(verdict.ok);
  EXPECT_NE(verdict.failure.find("has weight dual 2z = 2 but is not full"), std::string::npos) << verdict.failure;
}

TEST(SplitCertificateRules, ShapeAndModeAreChecked) {
  const Graph graph = Graph::from_edges(3, {{0, 1, 5}, {1, 2, 1}});
  LexicographicCertificate cert;
  cert.mate = {1, 0, kNone};
  cert.class_dual2 = {0, 2, 0};
  cert.weight_dual2 = {0, 10, 0};
  ASSERT_TRUE(check_lexicographic_certificate(graph, cert).ok);

  LexicographicCertificate wrong_mode = cert;
  wrong_mode.mode = Mode::max_weight;
  EXPECT_NE(check_lexicographic_certificate(graph, wrong_mode).failure.find("mode is max-weight"), std::string::npos);

  LexicographicCertificate short_prices = cert;
  short_prices.weight_dual2.pop_back();
  EXPECT_FALSE(check_lexicographic_certificate(graph, short_prices).ok);

  LexicographicCertificate perfect = cert;
  perfect.mode = Mode::perfect;
  const CheckResult exposed = check_lexicographic_certificate(graph, perfect);
  ASSERT_FALSE(exposed.ok);
  EXPECT_NE(exposed.failure.find("perfect mode, but vertex 2 is exposed"), std::string::npos) << exposed.failure;

  LexicographicCertificate odd_family = cert;
  odd_family.blossoms.push_back({{0, 1}, 0, 0, kNone});  // two vertices: no odd set
  EXPECT_FALSE(check_lexicographic_certificate(graph, odd_family).ok);
}

}  // namespace
}  // namespace yoke
