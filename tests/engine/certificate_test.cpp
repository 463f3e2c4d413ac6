// Hand-built certificates for check_certificate: each correct one is accepted, and each
// corrupted copy is rejected with a message that names the kind of violation.
//
// Duals are written doubled, as the engine stores them: vd2 = 2u, dual2 = 2z. A slack below is
// 2u(i) + 2u(j) + (2z over blossoms holding both ends) - 2w. Every optimum claimed in a comment
// is also confirmed by exhaustive enumeration (certificate_test_util.h).
#include "yoke/certificate.h"

#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "tests/engine/certificate_test_util.h"

namespace yoke {
namespace {

using certtest::brute_force_optimum;
using certtest::matching_weight;

constexpr Vertex X = kNoVertex;

struct Case {
  Graph graph;
  Certificate cert;
};

Certificate make_cert(Mode mode, std::vector<Vertex> mate, std::vector<Weight> vd2,
                      std::vector<CertificateBlossom> blossoms = {}, Weight offset = 0) {
  Certificate cert;
  cert.mode = mode;
  cert.weight_offset = offset;
  cert.mate = std::move(mate);
  cert.vertex_dual2 = std::move(vd2);
  cert.blossoms = std::move(blossoms);
  return cert;
}

// Triangle 0-1-2, all weights 1. One pair fits (weight 1, common knowledge: an odd cycle of n
// vertices holds (n-1)/2 pairs). Vertex duals alone fail: tight edges need u = 1/2 everywhere,
// but exposed vertex 2 needs u = 0. So u = 0 and one blossom {0,1,2} with z = 1: every edge has
// slack 0 + 0 + 1 - 1 = 0, the blossom holds its (3-1)/2 = 1 pair, and w(M) = 1 = z * 1.
Case triangle() {
  return {Graph::from_edges(3, {{0, 1, 1}, {1, 2, 1}, {0, 2, 1}}),
          make_cert(Mode::max_weight, {1, 0, X}, {0, 0, 0}, {{{2, 0, 1}, 2, 2}})};
}

// Path 0-1-2-3 with weights 2, 3, 2. Best is {0-1, 2-3} = 4 (beats {1-2} = 3). Duals
// u = (0, 2, 1, 1): 0-1: 0+2-2 = 0, 2-3: 1+1-2 = 0, 1-2: 2+1-3 = 0; sum u = 4 = w(M).
Case path4() {
  return {Graph::from_edges(4, {{0, 1, 2}, {1, 2, 3}, {2, 3, 2}}),
          make_cert(Mode::max_weight, {1, 0, 3, 2}, {0, 4, 2, 2})};
}

// Path 0-1-2 with weights 1, 2: take {1-2} = 2, 0 stays exposed with u = 0. u = (0, 1, 1):
// 0-1: 0+1-1 = 0, 1-2: 1+1-2 = 0; sum u = 2.
Case path3() {
  return {Graph::from_edges(3, {{0, 1, 1}, {1, 2, 2}}),
          make_cert(Mode::max_weight, {X, 2, 1}, {0, 2, 2})};
}

// 5-cycle 0-1-2-3-4-0, weights 1: two pairs (common knowledge, odd cycle). As for the
// triangle, u = 0 and a blossom on all five with z = 1; it holds (5-1)/2 = 2 pairs and
// w(M) = 2 = z * 2.
Case five_cycle() {
  return {Graph::from_edges(5, {{0, 1, 1}, {1, 2, 1}, {2, 3, 1}, {3, 4, 1}, {4, 0, 1}}),
          make_cert(Mode::max_weight, {1, 0, 3, 2, X}, {0, 0, 0, 0, 0}, {{{4, 0, 1, 2, 3}, 2, 4}})};
}

// Triangle 0,1,2 (weights 4) with pendant edge 2-3 (weight 1). Best is {0-1, 2-3} = 5.
// Without a blossom: u0+u1 = 4, u2+u3 = 1 and u1+u2, u0+u2 >= 4 force u2 >= 2, so u3 < 0:
// impossible. With B = {0,1,2}, z = 4, u = (0, 0, 1/2, 1/2): 0-1: 0+0+4-4 = 0, 1-2 and 0-2:
// 1/2+4-4 = 1/2, 2-3: 1/2+1/2-1 = 0; B holds pair 0-1; sum u + z = 1 + 4 = 5.
Case triangle_with_pendant() {
  return {Graph::from_edges(4, {{0, 1, 4}, {1, 2, 4}, {0, 2, 4}, {2, 3, 1}}),
          make_cert(Mode::max_weight, {1, 0, 3, 2}, {0, 0, 1, 1}, {{{2, 0, 1}, 8, 2}})};
}

// Nested blossoms. A = {0,1,2} inside B = {A, 3, 4}; pairs 1-2 and 3-4, vertex 0 (base of both)
// exposed. Chosen duals u = (0, 1, 1, 1, 1), z(A) = 1, z(B) = 1, weights made tight where a
// comment says so: inside A the common z is 2, so 1-2: 1+1+2 = 4 (w 4, matched), 0-1 and 0-2:
// 0+1+2 = 3 (w 3); in B only, common z is 1: 2-3: 1+1+1 = 3 (w 3), 3-4: 3 (w 3, matched),
// 4-0: 0+1+1 = 2 (w 2). Dual objective: 4 + 1*1 + 1*2 = 7 = 4 + 3.
Case nested() {
  return {Graph::from_edges(5, {{0, 1, 3}, {1, 2, 4}, {0, 2, 3}, {2, 3, 3}, {3, 4, 3}, {4, 0, 2}}),
          make_cert(Mode::max_weight, {X, 2, 1, 4, 3}, {0, 2, 2, 2, 2},
                    {{{0, 1, 2}, 2, 0}, {{5, 3, 4}, 2, 0}})};
}

// Perfect mode, 4 vertices: 0-1 and 2-3 weigh -5, 0-2 and 1-3 weigh -1. The perfect matchings
// are {0-1, 2-3} = -10 and {0-2, 1-3} = -2. u = -1/2 everywhere: 0-2: -1/2-1/2+1 = 0,
// 0-1: -1+5 = 4 >= 0; sum u = -2.
Case perfect_negative() {
  return {Graph::from_edges(4, {{0, 1, -5}, {2, 3, -5}, {0, 2, -1}, {1, 3, -1}}),
          make_cert(Mode::perfect, {2, 3, 0, 1}, {-1, -1, -1, -1})};
}

// Perfect mode with a blossom: triangle 0-1 (-3), 1-2 (-1), 0-2 (-1), pendant 2-3 (-10). The only
// perfect matching is {0-1, 2-3} = -13. u = (-2, -2, 0, -10) and B = {0,1,2} with z = 1, i.e.
// vd2 = (-4, -4, 0, -20), dual2 = 2: 0-1: -4-4+2+6 = 0, 1-2: -4+0+2+2 = 0, 0-2 likewise,
// 2-3: 0-20+20 = 0; objective -28 + 2*1 = -26 = 2 * -13.
Case perfect_blossom() {
  return {Graph::from_edges(4, {{0, 1, -3}, {1, 2, -1}, {0, 2, -1}, {2, 3, -10}}),
          make_cert(Mode::perfect, {1, 0, 3, 2}, {-4, -4, 0, -20}, {{{2, 0, 1}, 2, 2}})};
}

// Max-cardinality on path 0-1 (1), 1-2 (10), 2-3 (1): two pairs beat the heavy middle edge.
// Offset 10 gives w' = 11, 20, 11, where {0-1, 2-3} = 22 > 20. Duals for w': u = (1, 10, 10, 1):
// 0-1: 1+10-11 = 0, 1-2: 10+10-20 = 0, 2-3: 0; sum u = 22.
Case max_cardinality_path() {
  return {Graph::from_edges(4, {{0, 1, 1}, {1, 2, 10}, {2, 3, 1}}),
          make_cert(Mode::max_cardinality, {1, 0, 3, 2}, {2, 20, 20, 2}, {}, 10)};
}

CheckResult check(const Case& c) { return check_certificate(c.graph, c.cert); }

void expect_rejected(const Case& c, const std::string& words) {
  const CheckResult result = check(c);
  EXPECT_FALSE(result.ok) << "expected a failure mentioning '" << words << "'";
  EXPECT_NE(result.failure.find(words), std::string::npos)
      << "failure '" << result.failure << "' does not mention '" << words << "'";
}

// ---------------------------------------------------------------- accepted certificates

struct Expected {
  const char* name;
  Case (*make)();
  Weight optimum2;  // doubled optimum of the offset weights, by hand (comments above)
};

TEST(CertificateAccepts, HandBuiltCertificates) {
  const Expected cases[] = {
      {"triangle", triangle, 2},
      {"path4", path4, 8},
      {"path3", path3, 4},
      {"five_cycle", five_cycle, 4},
      {"triangle_with_pendant", triangle_with_pendant, 10},
      {"nested", nested, 14},
      {"perfect_negative", perfect_negative, -4},
      {"perfect_blossom", perfect_blossom, -26},
      {"max_cardinality_path", max_cardinality_path, 44},
  };
  for (const Expected& expected : cases) {
    SCOPED_TRACE(expected.name);
    const Case c = expected.make();
    const CheckResult result = check(c);
    EXPECT_TRUE(result.ok) << result.failure;
    EXPECT_TRUE(result.failure.empty());
    EXPECT_EQ(static_cast<std::int64_t>(result.dual_objective2), expected.optimum2);
    // The hand reasoning, confirmed by exhaustive enumeration of all matchings.
    const auto best = brute_force_optimum(c.graph, c.cert.mode, c.cert.weight_offset);
    ASSERT_TRUE(best.has_value());
    EXPECT_EQ(2 * *best, expected.optimum2);
    EXPECT_EQ(2 * matching_weight(c.graph, c.cert.mate, c.cert.weight_offset), expected.optimum2);
  }
}

TEST(CertificateAccepts, MaxCardinalityOffsetPicksTheMostPairs) {
  // Exhaustive enumeration with the plain weights prefers the middle edge (10 > 2); the offset
  // is what makes two pairs win, and the certificate proves it for w + 10.
  const Case c = max_cardinality_path();
  EXPECT_EQ(brute_force_optimum(c.graph, Mode::max_weight, 0), 10);
  EXPECT_EQ(matching_weight(c.graph, c.cert.mate, 0), 2);
}

TEST(CertificateAccepts, EmptyGraphAndIsolatedVertices) {
  EXPECT_TRUE(check_certificate(Graph(), Certificate{}).ok);
  const Case c{Graph(3), make_cert(Mode::max_weight, {X, X, X}, {0, 0, 0})};
  EXPECT_TRUE(check(c).ok) << check(c).failure;
}

TEST(CertificateAccepts, EdgesOfNonPositiveWeightAreCheckedToo) {
  // In perfect mode negative vertex duals can make an edge of negative weight infeasible.
  // perfect_negative with u(0) = -11/2, u(2) = 9/2 keeps 0-2 tight (-11 + 9 + 2 = 0) and the
  // objective at -2, but 0-1 (weight -5) gets -11 - 1 + 10 = -2.
  Case c = perfect_negative();
  c.cert.vertex_dual2 = {-11, -1, 9, -1};
  expect_rejected(c, "edge 0-1 (index 0, w -5) has negative slack -2");
  // With u(0) = -9/2, u(2) = 7/2 instead, 0-1 has slack 0 and the certificate holds.
  c.cert.vertex_dual2 = {-9, -1, 7, -1};
  EXPECT_TRUE(check(c).ok) << check(c).failure;
}

// ---------------------------------------------------------------- rejected certificates

TEST(CertificateRejects, WrongSizes) {
  Case c = path4();
  c.cert.mate.pop_back();
  expect_rejected(c, "mate has 3 entries, the graph has 4 vertices");
  c = path4();
  c.cert.vertex_dual2.push_back(0);
  expect_rejected(c, "vertex_dual2 has 5 entries");
}

TEST(CertificateRejects, NonSymmetricMate) {
  Case c = path4();
  c.cert.mate[0] = X;  // 1 still claims 0
  expect_rejected(c, "mate is not symmetric: mate[1] = 0 but vertex 0 is exposed");
  c = path4();
  c.cert.mate[3] = 1;  // 1 is matched to 0, not to 3
  expect_rejected(c, "not symmetric");
}

TEST(CertificateRejects, MateThatIsNotAnEdge) {
  Case c = path4();
  c.cert.mate = {2, 3, 0, 1};  // 0-2 and 1-3 are not edges of the path
  expect_rejected(c, "vertex 0 is matched to 2, but 0-2 is not an edge of the graph");
}

TEST(CertificateRejects, MateOutOfRangeOrSelf) {
  Case c = path4();
  c.cert.mate[0] = 17;
  expect_rejected(c, "mate[0] = 17 is not a vertex");
  c = path4();
  c.cert.mate[0] = 0;
  expect_rejected(c, "vertex 0 is matched to itself");
}

TEST(CertificateRejects, MatchedEdgeWithPositiveSlack) {
  Case c = path4();
  c.cert.vertex_dual2[0] = 2;  // 0-1 now has slack 2 + 4 - 4 = 2; every edge stays feasible
  expect_rejected(c, "matched edge 0-1 (index 0, w 2) is not tight: slack 2");
}

TEST(CertificateRejects, NegativeSlack) {
  Case c = path4();
  c.cert.vertex_dual2[1] = 2;  // 0-1: 0 + 2 - 4 = -2 (and 1-2 too; the first edge is reported)
  const CheckResult result = check(c);
  EXPECT_FALSE(result.ok);
  EXPECT_EQ(result.failure,
            "edge 0-1 (index 0, w 2) has negative slack -2 "
            "(2u: 0 + 2, 2z of blossoms holding both ends: 0, 2w: 4)");
}

TEST(CertificateRejects, NegativeSlackUnderABlossom) {
  Case c = triangle_with_pendant();
  c.cert.blossoms[0].dual2 = 6;  // 0-1: 0 + 0 + 6 - 8 = -2
  expect_rejected(c, "edge 0-1 (index 0, w 4) has negative slack -2");
  expect_rejected(c, "2z of blossoms holding both ends: 6");
}

TEST(CertificateRejects, NegativeSlackWithOffsetNamesTheOffsetWeight) {
  Case c = max_cardinality_path();
  c.cert.vertex_dual2[1] = 18;  // 1-2: 18 + 20 - 40 = -2
  expect_rejected(c, "negative slack -2");
  expect_rejected(c, "2(w + offset): 22");
}

TEST(CertificateRejects, OffsetThatDoesNotMatchTheDuals) {
  Case c = max_cardinality_path();
  c.cert.weight_offset = 0;  // the duals are for w + 10: 0-1 has slack 2 + 20 - 2 = 20
  expect_rejected(c, "not tight: slack 20");
}

TEST(CertificateRejects, OffsetInMaxWeightMode) {
  Case c = path4();
  c.cert.weight_offset = 3;
  expect_rejected(c, "weight_offset is 3 but must be 0 in max-weight mode");
}

TEST(CertificateRejects, ExposedVertexWithPositiveDual) {
  Case c = triangle();
  c.cert.vertex_dual2[2] = 2;  // edges stay feasible; 2 is exposed
  expect_rejected(c, "vertex 2 is exposed but has dual 2u = 2");
  c = path3();
  c.cert.mode = Mode::max_cardinality;  // the same rule holds there
  c.cert.vertex_dual2[0] = 2;
  expect_rejected(c, "vertex 0 is exposed");
}

TEST(CertificateRejects, BlossomWithPositiveDualThatIsNotFull) {
  Case c = triangle_with_pendant();
  c.cert.mate[0] = X;  // drop pair 0-1; u(0) = u(1) = 0 so exposure alone is fine
  c.cert.mate[1] = X;
  expect_rejected(c, "blossom 0 (node 4) has 2z = 8 > 0 but is not full: it holds 0 matched edges");
}

TEST(CertificateRejects, EvenOrTinyBlossom) {
  Case c = triangle_with_pendant();
  c.cert.blossoms[0].children = {2, 0, 1, 3};
  expect_rejected(c, "blossom 0 (node 4) has size 4");
  c = triangle_with_pendant();
  c.cert.blossoms[0].children = {2};
  expect_rejected(c, "has size 1");
  c = triangle_with_pendant();
  c.cert.blossoms[0].children = {};
  expect_rejected(c, "has size 0");
}

TEST(CertificateRejects, BlossomCycle) {
  Case c = triangle();
  // Node 3 (blossom 0) and node 4 (blossom 1) each list the other as a child.
  c.cert.blossoms = {{{0, 4}, 0, kNoVertex}, {{3, 1, 2}, 0, kNoVertex}};
  expect_rejected(c, "is its own ancestor");
  c = triangle();
  c.cert.blossoms[0].children = {3, 0, 1, 2};  // blossom 0 is node 3: its own child
  expect_rejected(c, "blossom 0 (node 3) is its own ancestor");
}

TEST(CertificateRejects, NodeWithTwoParents) {
  Case c = triangle();
  c.cert.blossoms.push_back({{0, 1, 2}, 0, kNoVertex});
  expect_rejected(c, "vertex 0 has two parents: blossom 0 (node 3) and blossom 1 (node 4)");
  c = triangle();
  c.cert.blossoms[0].children = {2, 0, 1, 1};  // the same child twice
  expect_rejected(c, "vertex 1 has two parents");
}

TEST(CertificateRejects, ChildIdOutOfRange) {
  Case c = triangle();
  c.cert.blossoms[0].children = {2, 0, 9};
  expect_rejected(c, "blossom 0 lists child 9, which is no node");
}

TEST(CertificateRejects, BaseOutsideTheBlossom) {
  Case c = triangle_with_pendant();
  c.cert.blossoms[0].base = 3;
  expect_rejected(c, "names base vertex 3, which is not inside it");
  c.cert.blossoms[0].base = 40;
  expect_rejected(c, "names base 40, which is not a vertex");
}

TEST(CertificateRejects, NegativeBlossomDual) {
  Case c = triangle();
  c.cert.blossoms[0].dual2 = -2;
  expect_rejected(c, "blossom 0 (node 3) has negative dual 2z = -2");
}

TEST(CertificateRejects, NegativeVertexDualOutsidePerfectMode) {
  Case c = perfect_blossom();
  c.cert.mode = Mode::max_weight;
  expect_rejected(c, "vertex 0 has negative dual 2u = -4 (only perfect mode");
}

TEST(CertificateRejects, PerfectModeWithAnExposedVertex) {
  Case c = perfect_negative();
  c.cert.mate = {X, 3, X, 1};
  expect_rejected(c, "perfect mode, but vertex 0 is exposed");
}

TEST(CertificateRejects, SelfLoopInTheGraph) {
  Case c = path3();
  c.graph.add_edge(1, 1, 5);
  expect_rejected(c, "is a self loop at vertex 1");
}

TEST(CertificateRejects, SuboptimalMatchingWhateverTheDuals) {
  // Path 0-1-2-3 (2, 3, 2) with M = {1-2}, weight 3 < 4 (exhaustive enumeration: optimum 4).
  Case c = path4();
  c.cert.mate = {X, 2, 1, X};
  ASSERT_EQ(brute_force_optimum(c.graph, Mode::max_weight, 0), 4);
  // The optimum's duals: 1-2 is tight, but exposed vertex 3 has u = 1.
  c.cert.vertex_dual2 = {0, 4, 2, 2};
  expect_rejected(c, "vertex 3 is exposed");
  // Duals tight for 1-2 with exposed ends at 0: 0-1 gets 0 + 3 - 4 < 0.
  c.cert.vertex_dual2 = {0, 3, 3, 0};
  expect_rejected(c, "edge 0-1 (index 0, w 2) has negative slack -1");
  // Adding a blossom {0,1,2} (it does hold pair 1-2): exposed 3 keeps u = 0, so 2-3 needs
  // u(2) >= 2, and then 1-2 is not tight.
  c.cert.blossoms = {{{0, 1, 2}, 2, 0}};
  c.cert.vertex_dual2 = {0, 2, 4, 0};
  EXPECT_FALSE(check(c).ok);
  // Exhaustively: no vertex dual vector on a grid certifies M, with or without that blossom.
  for (const Weight z2 : {-1, 0, 2, 4}) {
    c.cert.blossoms.clear();
    if (z2 >= 0) c.cert.blossoms = {{{0, 1, 2}, z2, 0}};
    for (int code = 0; code < 9 * 9 * 9 * 9; ++code) {
      int rest = code;
      for (Weight& u2 : c.cert.vertex_dual2) {
        u2 = rest % 9 - 1;  // -1 .. 7
        rest /= 9;
      }
      ASSERT_FALSE(check(c).ok) << "accepted duals " << c.cert.vertex_dual2[0] << " "
                                << c.cert.vertex_dual2[1] << " " << c.cert.vertex_dual2[2] << " "
                                << c.cert.vertex_dual2[3] << " with 2z " << z2;
    }
  }
}

}  // namespace
}  // namespace yoke
