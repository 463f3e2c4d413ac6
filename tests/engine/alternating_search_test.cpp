// The search's order at one dual level (engine/solver/alternating_search.h): a tree that can end at the
// level it has reached ends there, before it floods the rest of that level. Hand-built states
// where the old order (every edge made tight at the level first) scanned every branch; counts,
// not times, and every result certified.
#include "solver/alternating_search.h"

#include <gtest/gtest.h>

#include <functional>
#include <vector>

#include "yoke/certificate.h"

namespace yoke {
namespace {

// A root r = 0 with doubled dual `root_dual2`, and `branches` branches hanging off it: r - x
// (unmatched, slack2 `branch_slack2`), x = z matched, then z - c1 = c2 - c3 = c4 ... a chain of
// `chain_pairs` matched pairs joined by tight unmatched edges. Every vertex but r has doubled
// dual 20, so every edge past r - x is tight: once a branch is entered, the whole chain is at
// the same dual level.
struct Star {
  std::vector<Edge> edges;
  std::vector<Vertex> mate;
  std::vector<Weight> dual2;
};

Star star(std::size_t branches, std::size_t chain_pairs, Weight root_dual2, Weight branch_slack2) {
  Star s;
  s.mate.push_back(kNoVertex);
  s.dual2.push_back(root_dual2);
  auto add_vertex = [&]() {
    s.mate.push_back(kNoVertex);
    s.dual2.push_back(20);
    return static_cast<Vertex>(s.mate.size() - 1);
  };
  auto match = [&](Vertex a, Vertex b) {
    s.mate[a] = b;
    s.mate[b] = a;
    s.edges.push_back({a, b, 20});
  };
  // slack2 of r - x = root_dual2 + 20 - 2 w
  const Weight branch_weight = (root_dual2 + 20 - branch_slack2) / 2;
  for (std::size_t i = 0; i < branches; ++i) {
    const Vertex x = add_vertex();
    const Vertex z = add_vertex();
    s.edges.push_back({0, x, branch_weight});
    match(x, z);
    Vertex end = z;
    for (std::size_t j = 0; j < chain_pairs; ++j) {
      const Vertex c1 = add_vertex();
      const Vertex c2 = add_vertex();
      s.edges.push_back({end, c1, 20});
      match(c1, c2);
      end = c2;
    }
  }
  return s;
}

struct Solved {
  SolveStats stats;
  std::vector<Vertex> mate;
  CheckResult check;
};

// Any hand-built state with one root, r = 0; `shape` may form blossoms first.
Solved search_from_state(std::size_t n, const std::vector<Edge>& edges,
                         const std::vector<Vertex>& mate, const std::vector<Weight>& dual2,
                         const std::function<void(BlossomForest&)>& shape = {}) {
  const Graph graph = Graph::from_edges(n, edges);
  MatchingState state(n);
  for (Vertex v = 0; v < n; ++v) {
    state.mate.set(v, mate[v]);
    state.dual2[v] = dual2[v];
  }
  if (shape) shape(state.forest);
  AlternatingSearch search(graph, 0, state);
  search.add_root(0);
  search.run();
  Certificate cert;
  cert.mate = state.mate.values();
  cert.vertex_dual2 = state.dual2;
  cert.blossoms = state.forest.certificate_blossoms({}, n);
  return {search.stats(), state.mate.values(), check_certificate(graph, cert)};
}

Solved search_from_root(const Star& s) {
  return search_from_state(s.mate.size(), s.edges, s.mate, s.dual2);
}

// r's dual reaches 0 at delta 2, when every r - x edge turns tight too: the tree ends with r
// exposed at dual 0 and never enters a branch.
TEST(AlternatingSearchOrder, DualReachingZeroEndsTheTreeBeforeTheLevelFloods) {
  const Star s = star(/*branches=*/40, /*chain_pairs=*/25, /*root_dual2=*/2, /*branch_slack2=*/2);
  const Solved solved = search_from_root(s);
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.mate[0], kNoVertex);
  EXPECT_EQ(solved.stats.augmentations, 0u);
  EXPECT_EQ(solved.stats.scans, 1u);  // r alone; flooding the level scanned all 40 x 26 evens
}

// The same star plus an exposed vertex e at dual 0, whose edge to r turns tight at the same
// level as the branches (r's dual reaches 0 only later): the tree augments into e before it
// grows into any branch.
TEST(AlternatingSearchOrder, ExposedVertexAtTheLevelIsTakenBeforeTheBranches) {
  Star s = star(/*branches=*/40, /*chain_pairs=*/25, /*root_dual2=*/4, /*branch_slack2=*/2);
  const auto e = static_cast<Vertex>(s.mate.size());
  s.mate.push_back(kNoVertex);
  s.dual2.push_back(0);
  s.edges.push_back({0, e, 1});  // slack2 = 4 + 0 - 2 = 2, listed after every branch
  const Solved solved = search_from_root(s);
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.mate[0], e);
  EXPECT_EQ(solved.stats.augmentations, 1u);
  EXPECT_EQ(solved.stats.scans, 1u);
}

// A matched vertex at dual 0 behind a branch ends the tree as soon as it turns even: the edge
// into its mate goes before the other branches' edges at the same level.
TEST(AlternatingSearchOrder, ZeroDualMateAtTheLevelIsTakenBeforeTheBranches) {
  Star s = star(/*branches=*/40, /*chain_pairs=*/25, /*root_dual2=*/4, /*branch_slack2=*/2);
  const auto x = static_cast<Vertex>(s.mate.size());
  const auto z = x + 1;
  s.mate.push_back(z);
  s.mate.push_back(x);
  s.dual2.push_back(20);
  s.dual2.push_back(0);
  s.edges.push_back({x, z, 10});  // tight: 20 + 0 = 2 x 10
  s.edges.push_back({0, x, 11});  // slack2 = 4 + 20 - 22 = 2, listed after every branch
  const Solved solved = search_from_root(s);
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.mate[0], x);
  EXPECT_EQ(solved.mate[z], kNoVertex);
  // r only: z turns even at dual 0, which ends the tree at this level, so z is not scanned.
  EXPECT_EQ(solved.stats.scans, 1u);
}

// The root is a blossom B = {0, 1, 2} (base 0 exposed, 1 - 2 matched, z = 0), so all three
// vertices wait to be scanned; the first scanned, 2, has a tight edge into the exposed vertex e.
// The tree ends at this level: the other two are not scanned.
TEST(AlternatingSearchOrder, ATightEdgeIntoAnExposedVertexStopsTheScans) {
  const std::vector<Edge> edges = {{0, 1, 2}, {1, 2, 2}, {2, 0, 2}, {2, 3, 1}};
  const Solved solved = search_from_state(
      4, edges, {kNoVertex, 2, 1, kNoVertex}, {2, 2, 2, 0},
      [](BlossomForest& forest) { forest.make_blossom({0, 1, 2}, {{0, 1}, {1, 2}, {2, 0}}); });
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.mate[2], 3u);
  EXPECT_EQ(solved.mate[0], 1u);
  EXPECT_EQ(solved.stats.scans, 1u);  // all three before the rule
}

// A free blossom B = {1, 2, 3} whose base 1 is exposed (a later root of a pool's commit, say):
// taking r - 2, into a vertex of B that is not its base, augments. It is due at the same level
// as two branch edges listed before it, and goes first (2's own mate, 3, has a positive dual,
// so the kind must be read from B's base, not from 2).
TEST(AlternatingSearchOrder, AFreeBlossomWithAnExposedBaseIsTakenBeforeTheBranches) {
  const std::vector<Edge> edges = {{0, 4, 2}, {4, 5, 6}, {0, 6, 2}, {6, 7, 6},
                                   {1, 2, 1}, {2, 3, 2}, {3, 1, 1}, {0, 2, 2}};
  const std::vector<Vertex> mate = {kNoVertex, kNoVertex, 3, 2, 5, 4, 7, 6};
  const std::vector<Weight> dual2 = {4, 0, 2, 2, 2, 10, 2, 10};
  const Solved solved = search_from_state(8, edges, mate, dual2, [](BlossomForest& forest) {
    forest.make_blossom({1, 2, 3}, {{1, 2}, {2, 3}, {3, 1}});
  });
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.mate[0], 2u);
  EXPECT_EQ(solved.mate[1], 3u);
  EXPECT_EQ(solved.stats.scans, 1u);  // r only; before, the branches' mates 5 and 7 as well
}

// r's edge to a is tight at once; a's mate b holds far more dual (100) than r has left (4), so
// the tree ends (r's dual reaching 0) long before b's could: b's dual bound is not queued.
TEST(AlternatingSearchFreeBounds, AVertexHoldingMoreDualThanTheRootHasLeftQueuesNoBound) {
  const std::vector<Edge> edges = {{0, 1, 5}, {1, 2, 53}};
  const Solved solved = search_from_state(3, edges, {kNoVertex, 2, 1}, {4, 6, 100});
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.mate[0], kNoVertex);
  EXPECT_EQ(solved.mate[1], 2u);
  EXPECT_EQ(solved.stats.scans, 2u);        // r and b
  EXPECT_EQ(solved.stats.heap_pushes, 2u);  // r's dual and r - a; b's dual as well before
}

// A lone tree ends at the latest when an edge into an exposed vertex turns tight, so once such
// an edge is queued, bounds due later are not: here r - e (due at 2) is r's first edge, and none
// of the 40 branch edges behind it (due at 4) is queued. Only r's own dual bound and r - e are.
TEST(AlternatingSearchFreeBounds, NothingDueAfterAnExposedVertexIsQueued) {
  Star s = star(/*branches=*/40, /*chain_pairs=*/2, /*root_dual2=*/10, /*branch_slack2=*/4);
  const auto e = static_cast<Vertex>(s.mate.size());
  s.mate.push_back(kNoVertex);
  s.dual2.push_back(0);
  s.edges.insert(s.edges.begin(), Edge{0, e, 4});  // slack2 = 10 + 0 - 8 = 2, listed first
  const Solved solved = search_from_root(s);
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.mate[0], e);
  EXPECT_EQ(solved.stats.scans, 1u);
  EXPECT_EQ(solved.stats.heap_pushes, 2u);  // before this rule: 42, one per branch as well
}

// Two edges into one free vertex: the worse one (r - x, due at 8) is queued first, the better
// one (y - x, due at 6) only once y has turned even at 2. The tree must take y - x, or y - x
// would go negative before r - x comes due. (A filter keeping one queued bound per free vertex
// must still queue the later, sooner one.)
TEST(AlternatingSearchFreeBounds, ALaterEdgeDueSoonerIsStillQueued) {
  // r = 0 (root, dual2 20), a = 1 and y = 2 matched (dual2 10 each), x = 3 exposed (dual2 0).
  const std::vector<Edge> edges = {{0, 1, 14}, {1, 2, 10}, {0, 3, 6}, {2, 3, 3}};
  const Solved solved = search_from_state(4, edges, {kNoVertex, 2, 1, kNoVertex}, {20, 10, 10, 0});
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.mate[0], 1u);
  EXPECT_EQ(solved.mate[2], 3u);
}

// A vertex whose bound was queued while its blossom was free, then spent steps odd inside the
// blossom, comes out free when the blossom expands: that old bound is early, and the edges
// into it must be queued afresh (a filter that let the old bound stand for the vertex fails
// here). B is a 5-cycle blossom b0..b4 = 1..5 (base b0 matched to m = 6,
// z2 = 6); the root r = 0 reaches b1 = 2 (due 6) and b3 = 4 (due 2). The tree enters B at b3
// at 2, B expands at 5 and frees b1 and b2; r - b1 is now due at 9, m - b1 at 7, and m's dual
// reaches 0 at 12. Had b1's old bound (6) stood as the one to beat, m - b1 would be dropped and
// the tree would step past 7 with m - b1 negative.
TEST(AlternatingSearchFreeBounds, AVertexFreedByAnExpansionIsQueuedAfresh) {
  const std::vector<Edge> edges = {{1, 2, 13}, {2, 3, 13}, {3, 4, 13}, {4, 5, 13}, {5, 1, 13},
                                   {1, 6, 10}, {0, 4, 24}, {0, 2, 22}, {6, 2, 9}};
  const std::vector<Vertex> mate = {kNoVertex, 6, 3, 2, 5, 4, 1};
  const std::vector<Weight> dual2 = {40, 10, 10, 10, 10, 10, 10};
  const Solved solved = search_from_state(7, edges, mate, dual2, [](BlossomForest& forest) {
    const NodeId b = forest.make_blossom({1, 2, 3, 4, 5}, {{1, 2}, {2, 3}, {3, 4}, {4, 5}, {5, 1}});
    forest.set_dual2(b, 6);
  });
  ASSERT_TRUE(solved.check.ok) << solved.check.failure;
  EXPECT_EQ(solved.stats.blossoms_expanded, 1u);
  EXPECT_EQ(solved.mate[0], 4u);
  EXPECT_EQ(solved.mate[1], 5u);         // the path r - b3 = b4 - b0 = m flipped
  EXPECT_EQ(solved.mate[2], 3u);         // b1 = b2 stay, b1 odd off the path
  EXPECT_EQ(solved.mate[6], kNoVertex);  // m's dual reached 0 first: it is the one left exposed
}

// Causes (Mates::set_cause): a run whose roots were added with one tags its trees' mate writes
// with it; a later run of the same search whose roots carry none leaves the caller's cause on
// its writes, not the earlier run's.
TEST(AlternatingSearchCauses, ARunWithoutCausesKeepsTheCallersCause) {
  // Two separate tight edges {0,1} and {2,3}, every vertex exposed with a positive dual.
  const Graph graph = Graph::from_edges(4, {{0, 1, 5}, {2, 3, 5}});
  MatchingState state(4);
  for (Vertex v = 0; v < 4; ++v) state.dual2[v] = 5;
  state.mate.open_journal();
  AlternatingSearch search(graph, 0, state);
  search.add_root(0, /*cause=*/7);
  search.run();
  ASSERT_EQ(state.mate[0], 1u);
  EXPECT_EQ(state.mate.last_cause(0), 7u);
  EXPECT_EQ(state.mate.last_cause(1), 7u);
  state.mate.set_cause(3);
  search.add_root(2);
  search.run();
  ASSERT_EQ(state.mate[2], 3u);
  EXPECT_EQ(state.mate.last_cause(2), 3u);
  EXPECT_EQ(state.mate.last_cause(3), 3u);
}

}  // namespace
}  // namespace yoke
