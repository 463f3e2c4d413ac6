// Unit tests for the laminar blossom family (engine/solver/blossom_forest.h): structure, top(),
// vertex lists, make_base (rotation and matching flips, also 3000 levels deep), dissolve.
#include "solver/blossom_forest.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <map>
#include <random>
#include <set>
#include <utility>
#include <vector>

namespace yoke {
namespace {

using Pair = std::pair<Vertex, Vertex>;

Pair unordered(Vertex a, Vertex b) { return {std::min(a, b), std::max(a, b)}; }

bool same_edges(const std::vector<CycleEdge>& x, const std::vector<CycleEdge>& y) {
  return std::equal(x.begin(), x.end(), y.begin(), y.end(),
                    [](const CycleEdge& p, const CycleEdge& q) { return p.from == q.from && p.to == q.to; });
}

// A forest built by hand, with what was given to make_blossom kept aside so the checks do not
// rely on the forest's own view of itself.
struct Fixture {
  explicit Fixture(std::size_t n) : forest(n), mate(n) {}

  NodeId blossom(const std::vector<NodeId>& children, const std::vector<CycleEdge>& edges) {
    const NodeId b = forest.make_blossom(children, edges);
    given[b] = {children, edges};
    for (const CycleEdge& e : edges) cycle_edges.insert(unordered(e.from, e.to));
    return b;
  }
  void match(Vertex a, Vertex b) {
    mate.set(a, b);
    mate.set(b, a);
  }

  BlossomForest forest;
  Mates mate;
  std::map<NodeId, std::pair<std::vector<NodeId>, std::vector<CycleEdge>>> given;
  std::set<Pair> cycle_edges;  // every cycle edge at every level
};

std::vector<Vertex> vertices_of(const BlossomForest& forest, NodeId node) {
  std::vector<Vertex> out;
  forest.for_each_vertex(node, [&](Vertex v) { out.push_back(v); });
  return out;
}

std::vector<Vertex> sorted(std::vector<Vertex> v) {
  std::sort(v.begin(), v.end());
  return v;
}

std::vector<Vertex> range(Vertex first, Vertex last) {  // [first, last]
  std::vector<Vertex> out;
  for (Vertex v = first; v <= last; ++v) out.push_back(v);
  return out;
}

// The child of b holding v, or kNoNode when v is not in b (child_containing would run off the
// top of the forest instead).
NodeId holder(const BlossomForest& forest, NodeId b, Vertex v) {
  NodeId node = v;
  for (;;) {
    const NodeId p = forest.parent(node);
    if (p == b) return node;
    if (p == kNoNode) return kNoNode;
    node = p;
  }
}

template <class T>
std::vector<T> rotated(std::vector<T> v, std::size_t r) {
  std::rotate(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(r), v.end());
  return v;
}

// Every blossom below and including `top_blossom`: children and edges are the given ones rotated
// by one amount, the base lies in the first child, cycle edge i joins child i to child i+1, edges
// 1, 3, ... are matched and 0, 2, ... are not, and each child's base is the end of its matched
// edge. With `all_vertices`, also checks directly that every vertex of each blossom but its base
// is matched inside it (O(size x depth)).
void check_structure(const Fixture& fx, NodeId top_blossom, bool all_vertices) {
  const BlossomForest& forest = fx.forest;
  const Mates& mate = fx.mate;
  std::vector<NodeId> stack = {top_blossom};
  while (!stack.empty()) {
    const NodeId b = stack.back();
    stack.pop_back();
    if (forest.is_vertex(b)) continue;
    SCOPED_TRACE(::testing::Message() << "blossom " << b);
    ASSERT_TRUE(forest.is_live_blossom(b));
    const auto& kids = forest.children(b);
    const auto& edges = forest.cycle_edges(b);
    const auto& [given_kids, given_edges] = fx.given.at(b);
    const std::size_t k = kids.size();
    ASSERT_EQ(k, given_kids.size());
    ASSERT_EQ(edges.size(), k);
    const auto r = static_cast<std::size_t>(std::find(given_kids.begin(), given_kids.end(), kids[0]) -
                                            given_kids.begin());
    ASSERT_LT(r, k);
    EXPECT_EQ(kids, rotated(given_kids, r));
    EXPECT_TRUE(same_edges(edges, rotated(given_edges, r))) << "cycle edges not rotated with the children";
    EXPECT_EQ(forest.base(b), forest.base(kids[0]));
    EXPECT_EQ(holder(forest, b, forest.base(b)), kids[0]);
    for (std::size_t i = 0; i < k; ++i) {
      EXPECT_EQ(forest.parent(kids[i]), b);
      const CycleEdge e = edges[i];
      EXPECT_EQ(holder(forest, b, e.from), kids[i]) << "edge " << i;
      EXPECT_EQ(holder(forest, b, e.to), kids[(i + 1) % k]) << "edge " << i;
      if (i % 2 == 1) {
        EXPECT_EQ(mate[e.from], e.to) << "edge " << i << " should be matched";
        EXPECT_EQ(mate[e.to], e.from) << "edge " << i << " should be matched";
        EXPECT_EQ(forest.base(kids[i]), e.from);
        EXPECT_EQ(forest.base(kids[i + 1]), e.to);
      } else {
        EXPECT_NE(mate[e.from], e.to) << "edge " << i << " should be unmatched";
        EXPECT_NE(mate[e.to], e.from) << "edge " << i << " should be unmatched";
      }
      stack.push_back(kids[i]);
    }
    if (all_vertices) {
      for (Vertex u : vertices_of(forest, b)) {
        if (u == forest.base(b)) {
          EXPECT_TRUE(mate[u] == kNoVertex || holder(forest, b, mate[u]) == kNoNode)
              << "base " << u << " is matched inside";
          continue;
        }
        ASSERT_NE(mate[u], kNoVertex) << u;
        EXPECT_NE(holder(forest, b, mate[u]), kNoNode) << u << " is matched outside";
        EXPECT_EQ(mate[mate[u]], u);
      }
    }
    if (::testing::Test::HasFatalFailure()) return;
  }
}

// Rebases top-level blossom b at v and checks the result: base(b) == v, mate[v] untouched,
// every other vertex of b matched to another vertex of b along a cycle edge, the top children
// rotated so the child holding v leads, and check_structure at every level.
void rebase_and_check(Fixture& fx, NodeId b, Vertex v, bool all_vertices = true) {
  SCOPED_TRACE(::testing::Message() << "make_base(" << b << ", " << v << ")");
  BlossomForest& forest = fx.forest;
  ASSERT_EQ(forest.parent(b), kNoNode);
  const std::vector<Vertex> members = sorted(vertices_of(forest, b));
  const Vertex mate_v = fx.mate[v];
  const NodeId entry = holder(forest, b, v);
  ASSERT_NE(entry, kNoNode);
  const auto& given_kids = fx.given.at(b).first;
  const auto r = static_cast<std::size_t>(std::find(given_kids.begin(), given_kids.end(), entry) -
                                          given_kids.begin());

  forest.make_base(b, v, fx.mate);

  EXPECT_EQ(forest.base(b), v);
  EXPECT_EQ(fx.mate[v], mate_v) << "make_base must leave the new base's mate to the caller";
  EXPECT_EQ(forest.children(b), rotated(given_kids, r));
  EXPECT_EQ(sorted(vertices_of(forest, b)), members);
  std::size_t matched = 0;
  for (Vertex u : members) {
    if (u == v) continue;
    const Vertex m = fx.mate[u];
    ASSERT_NE(m, kNoVertex) << u << " left unmatched";
    EXPECT_NE(m, v) << u << " matched to the new base";
    EXPECT_TRUE(std::binary_search(members.begin(), members.end(), m)) << u << " matched outside b";
    EXPECT_EQ(fx.mate[m], u) << u << " -- " << m << " is one-sided";
    EXPECT_TRUE(fx.cycle_edges.count(unordered(u, m))) << u << " -- " << m << " is no cycle edge";
    ++matched;
  }
  EXPECT_EQ(matched, members.size() - 1);
  // The caller then matches v outside b (here: leaves it exposed).
  fx.mate.set(v, kNoVertex);
  check_structure(fx, b, all_vertices);
}

// Vertices 0..4 form a 5-cycle blossom with base 0; 5 and 6 stay outside. 0 is matched to 5.
Fixture five_cycle(NodeId* b) {
  Fixture fx(7);
  *b = fx.blossom({0, 1, 2, 3, 4}, {{0, 1}, {1, 2}, {2, 3}, {3, 4}, {4, 0}});
  fx.match(1, 2);
  fx.match(3, 4);
  fx.match(0, 5);
  return fx;
}

TEST(BlossomForest, FreshForest) {
  BlossomForest forest(4);
  EXPECT_EQ(forest.vertex_count(), 4u);
  for (Vertex v = 0; v < 4; ++v) {
    EXPECT_TRUE(forest.is_vertex(v));
    EXPECT_EQ(forest.top(v), v);
    EXPECT_EQ(forest.base(v), v);
    EXPECT_EQ(forest.parent(v), kNoNode);
    EXPECT_EQ(vertices_of(forest, v), std::vector<Vertex>{v});
  }
  EXPECT_FALSE(forest.is_vertex(4));
  EXPECT_FALSE(forest.is_live_blossom(4));
  EXPECT_TRUE(forest.live_blossoms().empty());
}

TEST(BlossomForest, FiveCycleStructure) {
  NodeId b = kNoNode;
  Fixture fx = five_cycle(&b);
  const BlossomForest& forest = fx.forest;
  EXPECT_EQ(b, 7u);  // the first blossom slot is n
  EXPECT_TRUE(forest.is_live_blossom(b));
  EXPECT_FALSE(forest.is_vertex(b));
  EXPECT_EQ(forest.parent(b), kNoNode);
  EXPECT_EQ(forest.base(b), 0u);
  EXPECT_EQ(forest.dual2(b), 0);
  EXPECT_EQ(forest.children(b), (std::vector<NodeId>{0, 1, 2, 3, 4}));
  const std::vector<CycleEdge> edges = {{0, 1}, {1, 2}, {2, 3}, {3, 4}, {4, 0}};
  EXPECT_TRUE(same_edges(forest.cycle_edges(b), edges));
  for (Vertex v = 0; v < 5; ++v) {
    EXPECT_EQ(forest.top(v), b);
    EXPECT_EQ(forest.parent(v), b);
    EXPECT_EQ(forest.child_containing(b, v), v);
  }
  EXPECT_EQ(forest.top(5), 5u);
  EXPECT_EQ(forest.top(6), 6u);
  EXPECT_EQ(sorted(vertices_of(forest, b)), range(0, 4));
  EXPECT_EQ(forest.live_blossoms(), std::vector<NodeId>{b});
  fx.forest.set_dual2(b, 14);
  EXPECT_EQ(forest.dual2(b), 14);
  check_structure(fx, b, true);
}

TEST(BlossomForest, MakeBaseEveryVertexOfFiveCycle) {
  for (Vertex v = 0; v < 5; ++v) {
    NodeId b = kNoNode;
    Fixture fx = five_cycle(&b);
    rebase_and_check(fx, b, v);
    ASSERT_FALSE(HasFatalFailure());
  }
  // Exact pairs for two cases: from base 0 the even side towards v is re-paired.
  {
    NodeId b = kNoNode;
    Fixture fx = five_cycle(&b);
    fx.forest.make_base(b, 2, fx.mate);
    EXPECT_EQ(fx.mate.values(), (std::vector<Vertex>{1, 0, 1, 4, 3, 0, kNoVertex}));  // mate[2] stale
    const std::vector<CycleEdge> edges = {{2, 3}, {3, 4}, {4, 0}, {0, 1}, {1, 2}};
    EXPECT_TRUE(same_edges(fx.forest.cycle_edges(b), edges));
  }
  {
    NodeId b = kNoNode;
    Fixture fx = five_cycle(&b);
    fx.forest.make_base(b, 3, fx.mate);
    EXPECT_EQ(fx.mate.values(), (std::vector<Vertex>{4, 2, 1, 4, 0, 0, kNoVertex}));  // mate[3] stale
    EXPECT_EQ(fx.forest.children(b), (std::vector<NodeId>{3, 4, 0, 1, 2}));
  }
}

TEST(BlossomForest, RepeatedMakeBaseOnFiveCycle) {
  NodeId b = kNoNode;
  Fixture fx = five_cycle(&b);
  for (Vertex v : {2u, 4u, 1u, 3u, 3u, 0u, 4u, 2u, 0u}) {
    rebase_and_check(fx, b, v);
    ASSERT_FALSE(HasFatalFailure());
  }
}

// Three levels plus a sibling: A = [0,1,2] inside B = [A,3,4,5,6] inside C = [7,B,8,D,9], with
// D = [10,11,12]. C's base 7 is matched to 13 outside. Slots: A 14, B 15, D 16, C 17.
struct Nested {
  Fixture fx{14};
  NodeId a = kNoNode, b = kNoNode, d = kNoNode, c = kNoNode;
};

Nested nested_forest(bool form_c = true) {
  Nested n;
  Fixture& fx = n.fx;
  n.a = fx.blossom({0, 1, 2}, {{0, 1}, {1, 2}, {2, 0}});
  fx.match(1, 2);
  n.b = fx.blossom({n.a, 3, 4, 5, 6}, {{1, 3}, {3, 4}, {4, 5}, {5, 6}, {6, 2}});
  fx.match(3, 4);
  fx.match(5, 6);
  n.d = fx.blossom({10, 11, 12}, {{10, 11}, {11, 12}, {12, 10}});
  fx.match(11, 12);
  if (form_c) {
    n.c = fx.blossom({7, n.b, 8, n.d, 9}, {{7, 5}, {0, 8}, {8, 11}, {10, 9}, {9, 7}});
    fx.match(0, 8);
    fx.match(10, 9);
    fx.match(7, 13);
  }
  return n;
}

TEST(BlossomForest, NestedStructureAndTop) {
  Nested n = nested_forest(false);
  const BlossomForest& forest = n.fx.forest;
  EXPECT_EQ(std::vector<NodeId>({n.a, n.b, n.d}), (std::vector<NodeId>{14, 15, 16}));
  for (Vertex v = 0; v <= 6; ++v) EXPECT_EQ(forest.top(v), n.b) << v;
  for (Vertex v = 10; v <= 12; ++v) EXPECT_EQ(forest.top(v), n.d) << v;
  for (Vertex v : {7u, 8u, 9u, 13u}) EXPECT_EQ(forest.top(v), v);

  // Forming C must move every cached top, including those just looked up.
  n.c = n.fx.blossom({7, n.b, 8, n.d, 9}, {{7, 5}, {0, 8}, {8, 11}, {10, 9}, {9, 7}});
  EXPECT_EQ(n.c, 17u);
  for (Vertex v = 0; v <= 12; ++v) EXPECT_EQ(forest.top(v), n.c) << v;
  EXPECT_EQ(forest.top(13), 13u);

  EXPECT_EQ(forest.parent(0), n.a);
  EXPECT_EQ(forest.parent(n.a), n.b);
  EXPECT_EQ(forest.parent(n.b), n.c);
  EXPECT_EQ(forest.parent(n.d), n.c);
  EXPECT_EQ(forest.parent(3), n.b);
  EXPECT_EQ(forest.parent(7), n.c);
  EXPECT_EQ(forest.parent(n.c), kNoNode);
  EXPECT_EQ(forest.children(n.c), (std::vector<NodeId>{7, n.b, 8, n.d, 9}));
  EXPECT_EQ(forest.children(n.b), (std::vector<NodeId>{n.a, 3, 4, 5, 6}));
  EXPECT_EQ(forest.base(n.a), 0u);
  EXPECT_EQ(forest.base(n.b), 0u);
  EXPECT_EQ(forest.base(n.d), 10u);
  EXPECT_EQ(forest.base(n.c), 7u);
  EXPECT_EQ(forest.child_containing(n.c, 0), n.b);
  EXPECT_EQ(forest.child_containing(n.b, 0), n.a);
  EXPECT_EQ(forest.child_containing(n.c, 12), n.d);
  EXPECT_EQ(forest.child_containing(n.c, 9), 9u);

  EXPECT_EQ(sorted(vertices_of(forest, n.a)), range(0, 2));
  EXPECT_EQ(sorted(vertices_of(forest, n.b)), range(0, 6));
  EXPECT_EQ(sorted(vertices_of(forest, n.d)), range(10, 12));
  EXPECT_EQ(sorted(vertices_of(forest, n.c)), range(0, 12));
  EXPECT_EQ(forest.live_blossoms(), (std::vector<NodeId>{n.a, n.b, n.d, n.c}));

  n.fx.match(0, 8);
  n.fx.match(10, 9);
  n.fx.match(7, 13);
  check_structure(n.fx, n.c, true);
}

TEST(BlossomForest, MakeBaseEveryVertexOfNestedBlossom) {
  for (Vertex v = 0; v <= 12; ++v) {
    Nested n = nested_forest();
    rebase_and_check(n.fx, n.c, v);
    ASSERT_FALSE(HasFatalFailure());
  }
  // Rebasing an inner top-level blossom before C exists, at its deepest vertex.
  for (Vertex v = 0; v <= 6; ++v) {
    Nested n = nested_forest(false);
    rebase_and_check(n.fx, n.b, v);
    ASSERT_FALSE(HasFatalFailure());
  }
}

TEST(BlossomForest, RepeatedMakeBaseOnNestedBlossom) {
  Nested n = nested_forest();
  for (Vertex v : {2u, 11u, 5u, 0u, 9u, 12u, 1u, 7u, 4u, 10u, 3u, 8u, 6u, 2u}) {
    rebase_and_check(n.fx, n.c, v);
    ASSERT_FALSE(HasFatalFailure());
  }
}

TEST(BlossomForest, DissolveAndReuseSlot) {
  Nested n = nested_forest();
  BlossomForest& forest = n.fx.forest;
  // Rotate first, so the children order differs from the vertex list order.
  forest.make_base(n.c, 11, n.fx.mate);
  forest.make_base(n.c, 2, n.fx.mate);
  forest.dissolve(n.c);
  EXPECT_FALSE(forest.is_live_blossom(n.c));
  EXPECT_EQ(forest.live_blossoms(), (std::vector<NodeId>{n.a, n.b, n.d}));
  for (Vertex v = 0; v <= 6; ++v) EXPECT_EQ(forest.top(v), n.b) << v;
  for (Vertex v = 10; v <= 12; ++v) EXPECT_EQ(forest.top(v), n.d) << v;
  for (Vertex v : {7u, 8u, 9u}) EXPECT_EQ(forest.top(v), v);
  EXPECT_EQ(forest.parent(n.b), kNoNode);
  EXPECT_EQ(forest.parent(n.d), kNoNode);
  EXPECT_EQ(forest.parent(7), kNoNode);
  EXPECT_EQ(forest.base(n.b), 2u);  // the base make_base gave it stays
  EXPECT_EQ(sorted(vertices_of(forest, n.b)), range(0, 6));
  EXPECT_EQ(sorted(vertices_of(forest, n.d)), range(10, 12));

  // The freed slot is the next one handed out.
  const NodeId e = forest.make_blossom({9, 7, 8}, {{9, 7}, {7, 8}, {8, 9}});
  EXPECT_EQ(e, n.c);
  EXPECT_TRUE(forest.is_live_blossom(e));
  EXPECT_EQ(forest.base(e), 9u);
  EXPECT_EQ(forest.dual2(e), 0);
  EXPECT_EQ(forest.children(e), (std::vector<NodeId>{9, 7, 8}));
  EXPECT_EQ(sorted(vertices_of(forest, e)), (std::vector<Vertex>{7, 8, 9}));
  for (Vertex v : {7u, 8u, 9u}) EXPECT_EQ(forest.top(v), e);
  EXPECT_EQ(forest.top(0), n.b);

  // Regroup: dissolve B, then put A between its former siblings, in a new order; the next slot
  // after C's reuse is B's.
  forest.dissolve(n.b);
  for (Vertex v = 0; v <= 2; ++v) EXPECT_EQ(forest.top(v), n.a);
  for (Vertex v = 3; v <= 6; ++v) EXPECT_EQ(forest.top(v), v);
  EXPECT_EQ(forest.live_blossoms(), (std::vector<NodeId>{n.a, n.d, e}));
  const NodeId f = forest.make_blossom({4, n.a, 3}, {{4, 1}, {0, 3}, {3, 4}});
  EXPECT_EQ(f, n.b);
  EXPECT_EQ(sorted(vertices_of(forest, f)), (std::vector<Vertex>{0, 1, 2, 3, 4}));
  const NodeId g = forest.make_blossom({f, e, n.d}, {{3, 8}, {9, 12}, {11, 0}});
  EXPECT_EQ(g, 18u);  // the next never-used slot
  EXPECT_EQ(sorted(vertices_of(forest, g)),
            (std::vector<Vertex>{0, 1, 2, 3, 4, 7, 8, 9, 10, 11, 12}));
  for (Vertex v : {0u, 4u, 8u, 12u}) EXPECT_EQ(forest.top(v), g);
  for (Vertex v : {5u, 6u, 13u}) EXPECT_EQ(forest.top(v), v);
  EXPECT_EQ(forest.base(g), 4u);
  EXPECT_EQ(forest.live_blossoms(), (std::vector<NodeId>{n.a, f, n.d, e, g}));
}

// B_k = [B_(k-1), x_k, y_k] for k = 1..K with B_0 = vertex 0, x_k = 2k-1, y_k = 2k, edges
// x_(k-1) -- x_k, x_k -- y_k (matched), y_k -- y_(k-1) (vertex 0 for k = 1). Vertex 0 is the
// base of all. B_k is slot n + k - 1.
constexpr std::size_t kChainDepth = 3000;
constexpr auto kDeepVertices = static_cast<Vertex>(2 * kChainDepth + 1);

Vertex x_of(std::size_t k) { return k == 0 ? 0 : static_cast<Vertex>(2 * k - 1); }
Vertex y_of(std::size_t k) { return k == 0 ? 0 : static_cast<Vertex>(2 * k); }

Fixture deep_nest(NodeId* outer) {
  Fixture fx(kDeepVertices);
  NodeId inner = 0;
  for (std::size_t k = 1; k <= kChainDepth; ++k) {
    inner = fx.blossom({inner, x_of(k), y_of(k)},
                       {{x_of(k - 1), x_of(k)}, {x_of(k), y_of(k)}, {y_of(k), y_of(k - 1)}});
    fx.match(x_of(k), y_of(k));
  }
  *outer = inner;
  return fx;
}

TEST(BlossomForest, DeepNest) {
  NodeId outer = kNoNode;
  Fixture fx = deep_nest(&outer);
  BlossomForest& forest = fx.forest;
  EXPECT_EQ(outer, kDeepVertices + kChainDepth - 1);
  EXPECT_EQ(forest.live_blossoms().size(), kChainDepth);
  // The innermost vertex first: its cached top is itself, so top() climbs all 3000 levels.
  EXPECT_EQ(forest.top(0), outer);
  for (Vertex v = 0; v < kDeepVertices; ++v) ASSERT_EQ(forest.top(v), outer) << v;
  std::size_t depth = 0;
  for (NodeId node = 0; forest.parent(node) != kNoNode; node = forest.parent(node)) ++depth;
  EXPECT_EQ(depth, kChainDepth);
  const std::vector<Vertex> all = vertices_of(forest, outer);
  EXPECT_EQ(all.size(), kDeepVertices);
  EXPECT_EQ(sorted(all), range(0, kDeepVertices - 1));
  const NodeId middle = kDeepVertices + kChainDepth / 2 - 1;  // B_(K/2)
  EXPECT_EQ(sorted(vertices_of(forest, middle)), range(0, 2 * (kChainDepth / 2)));
  check_structure(fx, outer, false);
}

TEST(BlossomForest, DeepNestMakeBase) {
  NodeId outer = kNoNode;
  Fixture fx = deep_nest(&outer);
  // The outermost x: every level below is rebased in turn (a cascade 3000 deep).
  rebase_and_check(fx, outer, x_of(kChainDepth), false);
  ASSERT_FALSE(HasFatalFailure());
  // The deepest vertex: found 3000 levels down, and every level flips back.
  rebase_and_check(fx, outer, 0, false);
  ASSERT_FALSE(HasFatalFailure());
  // Deep, middle and outer vertices, from a rotated state each time.
  for (Vertex v : {y_of(1), x_of(kChainDepth / 2), y_of(kChainDepth), x_of(2), 0u}) {
    rebase_and_check(fx, outer, v, false);
    ASSERT_FALSE(HasFatalFailure());
  }
  // Along the cascade, B_k's base is x_k or y_k: exact values at a few levels after the last
  // rebase at 0 all bases are 0 again.
  for (std::size_t k : {std::size_t{1}, kChainDepth / 3, kChainDepth}) {
    EXPECT_EQ(fx.forest.base(static_cast<NodeId>(kDeepVertices + k - 1)), 0u) << k;
  }
}

TEST(BlossomForest, DeepNestDissolveFromTheTop) {
  NodeId outer = kNoNode;
  Fixture fx = deep_nest(&outer);
  BlossomForest& forest = fx.forest;
  EXPECT_EQ(forest.top(0), outer);
  for (std::size_t k = kChainDepth; k >= 1; --k) {
    const auto b = static_cast<NodeId>(kDeepVertices + k - 1);
    forest.dissolve(b);
    const NodeId below = k == 1 ? NodeId{0} : b - 1;
    ASSERT_EQ(forest.top(0), below) << k;
    ASSERT_EQ(forest.top(x_of(k)), x_of(k));
    ASSERT_EQ(forest.top(y_of(k)), y_of(k));
    if (k > 1) {
      ASSERT_EQ(forest.top(y_of(k - 1)), below);
    }
  }
  EXPECT_TRUE(forest.live_blossoms().empty());
  // Slots come back lowest first.
  EXPECT_EQ(forest.make_blossom({0, 1, 2}, {{0, 1}, {1, 2}, {2, 0}}), kDeepVertices);
}

// top() against the definition (the top-level node holding the vertex) for every vertex,
// while the top of a 3000-deep nest is dissolved again and again and blossoms are formed over
// what is left (in the freed slots): the shortcuts a climb leaves on the nodes it passes
// (climb_to_top) must never outlive the node they name.
TEST(BlossomForest, DeepNestTopsStayRightAsItsTopIsDissolvedAndFormedAgain) {
  NodeId outer = kNoNode;
  Fixture fx = deep_nest(&outer);
  BlossomForest& forest = fx.forest;
  const auto check_every_vertex = [&](int round) {
    std::vector<NodeId> expected(kDeepVertices, kNoNode);
    for (Vertex v = 0; v < kDeepVertices; ++v) {
      if (forest.parent(v) == kNoNode) expected[v] = v;
    }
    for (NodeId b : forest.live_blossoms()) {
      if (forest.parent(b) == kNoNode) forest.for_each_vertex(b, [&](Vertex v) { expected[v] = b; });
    }
    for (Vertex v = 0; v < kDeepVertices; ++v) {
      ASSERT_EQ(forest.top(v), expected[v]) << "round " << round << ", vertex " << v;
    }
  };
  check_every_vertex(-1);
  NodeId top = outer;
  for (int round = 0; round < 60; ++round) {
    const std::vector<NodeId> children = forest.children(top);
    const std::vector<CycleEdge> edges = forest.cycle_edges(top);
    forest.dissolve(top);
    ASSERT_NO_FATAL_FAILURE(check_every_vertex(round));
    if (round % 3 == 2) {
      top = forest.make_blossom(children, edges);  // the slot just freed, a new version
      ASSERT_NO_FATAL_FAILURE(check_every_vertex(round));
    } else {
      top = children.front();  // B_(k-1)
    }
  }
}

// dissolve_unpriced_nest against dissolve() called level by level from a stack (the way it
// replaces): the same top-level nodes, the same tops, the same free slots in the same order.
// Some levels carry a dual, so the nest is cut into kept and dissolved parts.
TEST(BlossomForest, DeepNestDissolveUnpricedNestMatchesLevelByLevel) {
  NodeId outer = kNoNode;
  Fixture fast_fx = deep_nest(&outer);
  Fixture slow_fx = deep_nest(&outer);
  BlossomForest& fast = fast_fx.forest;
  BlossomForest& slow = slow_fx.forest;
  for (std::size_t k = 7; k < kChainDepth; k += 700) {  // priced levels: they stay
    const auto b = static_cast<NodeId>(kDeepVertices + k - 1);
    fast.set_dual2(b, 4);
    slow.set_dual2(b, 4);
  }
  EXPECT_EQ(fast.top(0), outer);
  EXPECT_EQ(slow.top(0), outer);
  fast.dissolve_unpriced_nest(outer);
  std::vector<NodeId> stack{outer};
  while (!stack.empty()) {
    const NodeId b = stack.back();
    stack.pop_back();
    for (NodeId child : slow.children(b)) {
      if (!slow.is_vertex(child) && slow.dual2(child) == 0) stack.push_back(child);
    }
    slow.dissolve(b);
  }
  EXPECT_EQ(fast.live_blossoms(), slow.live_blossoms());
  EXPECT_FALSE(fast.live_blossoms().empty());
  for (Vertex v = 0; v < kDeepVertices; ++v) {
    ASSERT_EQ(fast.top(v), slow.top(v)) << v;
    ASSERT_EQ(fast.parent(v), slow.parent(v)) << v;
  }
  for (NodeId b : fast.live_blossoms()) {
    ASSERT_EQ(fast.parent(b), slow.parent(b)) << b;
    ASSERT_EQ(sorted(vertices_of(fast, b)), sorted(vertices_of(slow, b))) << b;
  }
  // Slots come back in the same order: later blossom ids, and every choice after, agree.
  std::vector<NodeId> tops;
  for (Vertex v = 0; v < kDeepVertices && tops.size() < 15; ++v) {
    if (std::find(tops.begin(), tops.end(), fast.top(v)) == tops.end()) tops.push_back(fast.top(v));
  }
  ASSERT_EQ(tops.size(), 15u);
  for (std::size_t i = 0; i < 15; i += 3) {
    const std::vector<NodeId> three(tops.begin() + static_cast<std::ptrdiff_t>(i),
                                    tops.begin() + static_cast<std::ptrdiff_t>(i + 3));
    const std::vector<CycleEdge> edges(3, CycleEdge{0, 0});  // not read by these checks
    ASSERT_EQ(fast.make_blossom(three, edges), slow.make_blossom(three, edges)) << i;
  }
}

}  // namespace
}  // namespace yoke

namespace yoke {
namespace {

// top() after dissolve() is repaired lazily (a cache names a slot and its version). Random
// forms, dissolves (plain, along a path, and unpriced nests), settles and slot reuse, each
// followed by lookups compared with a climb along parent(); slots are reused at once (the free
// list is a stack), so stale caches naming a reused slot are exercised all the time.
TEST(BlossomForest, LazyTopMatchesAClimbUnderRandomDissolves) {
  constexpr std::size_t kVertices = 301;
  for (std::uint64_t seed = 1; seed <= 6; ++seed) {
    SCOPED_TRACE(seed);
    std::mt19937_64 rng(seed);
    BlossomForest forest(kVertices);
    std::vector<Weight> dual2(kVertices, 0);
    std::vector<Vertex> bases;
    std::vector<NodeId> tops(kVertices);
    for (Vertex v = 0; v < kVertices; ++v) tops[v] = v;
    auto climb = [&](Vertex v) {
      NodeId node = v;
      while (forest.parent(node) != kNoNode) node = forest.parent(node);
      return node;
    };
    auto refresh_tops = [&]() {
      tops.clear();
      for (Vertex v = 0; v < kVertices; ++v) {
        if (climb(v) == v || forest.is_live_blossom(climb(v))) {
          if (std::find(tops.begin(), tops.end(), climb(v)) == tops.end()) tops.push_back(climb(v));
        }
      }
    };
    for (int step = 0; step < 3000; ++step) {
      const std::uint64_t roll = rng() % 10;
      std::vector<NodeId> blossoms;
      for (NodeId t : tops) {
        if (!forest.is_vertex(t)) blossoms.push_back(t);
      }
      if (roll < 5 && tops.size() >= 5) {
        const std::size_t k = rng() % 2 == 0 ? 3 : 5;
        std::shuffle(tops.begin(), tops.end(), rng);
        std::vector<NodeId> children(tops.end() - static_cast<std::ptrdiff_t>(k), tops.end());
        std::vector<CycleEdge> edges;
        for (std::size_t i = 0; i < k; ++i) {
          edges.push_back({forest.base(children[i]), forest.base(children[(i + 1) % k])});
        }
        const NodeId b = forest.make_blossom(children, edges);
        forest.set_dual2(b, rng() % 3 == 0 ? 0 : 2);
      } else if (roll < 8 && !blossoms.empty()) {
        forest.dissolve(blossoms[rng() % blossoms.size()]);
      } else if (roll < 9 && !blossoms.empty()) {
        const NodeId b = blossoms[rng() % blossoms.size()];
        // the lowest blossom above a random vertex of b, dissolved with everything above it
        Vertex v = kNoVertex;
        std::size_t pick = rng() % forest.size(b);
        forest.for_each_vertex(b, [&](Vertex x) {
          if (pick-- == 0) v = x;
        });
        bases.clear();
        forest.dissolve_path(forest.parent(v), dual2, bases);
        forest.flush_pending(dual2);  // make_blossom and dissolve take no pending duals
      } else if (!blossoms.empty()) {
        const NodeId b = blossoms[rng() % blossoms.size()];
        forest.set_dual2(b, 0);
        forest.dissolve_unpriced_nest(b);
      }
      refresh_tops();
      if (rng() % 4 == 0 && !tops.empty()) forest.settle_top(tops[rng() % tops.size()]);
      for (int probe = 0; probe < 20; ++probe) {
        const auto v = static_cast<Vertex>(rng() % kVertices);
        ASSERT_EQ(forest.top(v), climb(v)) << "step " << step << ", vertex " << v;
      }
    }
  }
}

}  // namespace
}  // namespace yoke

namespace yoke {
namespace {

// Nests every vertex of a fresh `forest`: merges random odd groups (3 or 5) of top-level nodes
// until fewer than 3 are left, each new blossom's doubled dual from pick_dual2().
template <typename PickDual2>
void nest_at_random(BlossomForest& forest, std::mt19937_64& rng, PickDual2 pick_dual2) {
  std::vector<NodeId> tops(forest.vertex_count());
  for (Vertex v = 0; v < tops.size(); ++v) tops[v] = v;
  while (tops.size() >= 3) {
    const std::size_t k = tops.size() >= 5 && rng() % 2 == 0 ? 5 : 3;
    std::shuffle(tops.begin(), tops.end(), rng);
    std::vector<NodeId> children(tops.end() - static_cast<std::ptrdiff_t>(k), tops.end());
    tops.resize(tops.size() - k);
    std::vector<CycleEdge> edges;
    for (std::size_t i = 0; i < k; ++i) {
      edges.push_back({forest.base(children[i]), forest.base(children[(i + 1) % k])});
    }
    const NodeId b = forest.make_blossom(children, edges);
    forest.set_dual2(b, pick_dual2());
    tops.push_back(b);
  }
}

// The dual a vertex has while dissolutions may owe it: its own plus its top node's debt.
Weight owed_dual2(const BlossomForest& forest, const std::vector<Weight>& dual2, Vertex v) {
  return dual2[v] + forest.pending_dual2(forest.top(v));
}

// dissolve_path against the definition: every vertex gains half the dual of each dissolved
// blossom holding it (a vertex child at once, a blossom child as a pending dual that
// flush_pending writes), the counts of both add up to the vertices that gained, the bases of
// the dissolved blossoms are reported, and top() agrees with a climb. Nests are random, with
// many unpriced levels above and between priced ones (the levels dissolve_path does not visit).
TEST(BlossomForest, DissolvePathPushesExactlyTheDissolvedDuals) {
  constexpr std::size_t kVertices = 243;
  for (std::uint64_t seed = 1; seed <= 40; ++seed) {
    SCOPED_TRACE(seed);
    std::mt19937_64 rng(seed);
    BlossomForest forest(kVertices);
    nest_at_random(forest, rng, [&rng] {
      const std::uint64_t roll = rng() % 4;
      return roll < 2 ? 0 : static_cast<Weight>(2 * roll);
    });
    std::vector<Weight> dual2(kVertices);
    for (Vertex v = 0; v < kVertices; ++v) dual2[v] = static_cast<Weight>(2 * (rng() % 5));
    for (Vertex v = 0; v < kVertices; ++v) forest.top(v);  // warm caches, so stale ones are tested

    const auto v = static_cast<Vertex>(rng() % kVertices);
    if (forest.parent(v) == kNoNode) continue;
    // The lowest blossom: some ancestor of v, dissolved with everything above it.
    std::vector<NodeId> path;
    for (NodeId node = forest.parent(v); node != kNoNode; node = forest.parent(node)) path.push_back(node);
    path.erase(path.begin(), path.begin() + static_cast<std::ptrdiff_t>(rng() % path.size()));
    std::vector<Weight> expected = dual2;
    std::set<Vertex> expected_bases;
    for (NodeId b : path) {
      expected_bases.insert(forest.base(b));
      forest.for_each_vertex(b, [&](Vertex x) { expected[x] += forest.dual2(b) / 2; });
    }
    std::size_t gained = 0;
    for (Vertex x = 0; x < kVertices; ++x) gained += expected[x] != dual2[x] ? 1 : 0;

    std::vector<Vertex> bases;
    const std::size_t moved = forest.dissolve_path(path.front(), dual2, bases);
    for (Vertex x = 0; x < kVertices; ++x) {
      ASSERT_EQ(owed_dual2(forest, dual2, x), expected[x]) << "vertex " << x;
    }
    EXPECT_EQ(std::set<Vertex>(bases.begin(), bases.end()), expected_bases);
    const std::size_t flushed = forest.flush_pending(dual2);
    EXPECT_FALSE(forest.has_pending());
    EXPECT_EQ(dual2, expected);
    EXPECT_EQ(moved + flushed, gained);
    for (Vertex x = 0; x < kVertices; ++x) {
      NodeId node = x;
      while (forest.parent(node) != kNoNode) node = forest.parent(node);
      ASSERT_EQ(forest.top(x), node) << "vertex " << x;
    }
  }
}

}  // namespace
}  // namespace yoke

namespace yoke {
namespace {

// A batch's events dissolve one after another before its search: a later dissolution may start
// inside a blossom an earlier one left owing a pending dual. The debt passes down to the new
// children and adds to what the later path pushes; a forest that grows in between keeps it.
TEST(BlossomForest, PendingDualsStackAcrossDissolutionsAndSurviveGrowth) {
  constexpr std::size_t kVertices = 243;
  for (std::uint64_t seed = 1; seed <= 40; ++seed) {
    SCOPED_TRACE(seed);
    std::mt19937_64 rng(seed);
    BlossomForest forest(kVertices);
    nest_at_random(forest, rng, [&rng] {
      return rng() % 3 == 0 ? 0 : static_cast<Weight>(2 * (1 + rng() % 3));
    });
    std::vector<Weight> dual2(kVertices, 0);
    std::vector<Weight> expected(kVertices, 0);
    std::size_t written = 0;
    std::vector<Vertex> bases;
    for (int round = 0; round < 6; ++round) {
      const auto v = static_cast<Vertex>(rng() % kVertices);
      if (forest.parent(v) == kNoNode) continue;
      if (round == 3) {  // the pool's fit_capacity: blossom ids move, debts move with them
        forest.grow(forest.vertex_count() + 7);
        dual2.resize(forest.vertex_count(), 0);
        expected.resize(forest.vertex_count(), 0);
      }
      // The lowest blossom: a random ancestor of v (its ancestors may already be gone).
      std::vector<NodeId> path;
      for (NodeId node = forest.parent(v); node != kNoNode; node = forest.parent(node)) {
        path.push_back(node);
      }
      path.erase(path.begin(), path.begin() + static_cast<std::ptrdiff_t>(rng() % path.size()));
      for (NodeId b : path) {
        forest.for_each_vertex(b, [&](Vertex x) { expected[x] += forest.dual2(b) / 2; });
      }
      bases.clear();
      written += forest.dissolve_path(path.front(), dual2, bases);
      bool any_owed = false;
      for (Vertex x = 0; x < kVertices; ++x) {
        ASSERT_EQ(owed_dual2(forest, dual2, x), expected[x]) << "round " << round << ", " << x;
        any_owed = any_owed || forest.owed_dual2(x) != 0;
      }
      // has_pending() counts the nodes that owe: a debt passed down leaves its node owing none.
      EXPECT_EQ(forest.has_pending(), any_owed) << "round " << round;
    }
    written += forest.flush_pending(dual2);
    EXPECT_FALSE(forest.has_pending());
    EXPECT_EQ(dual2, expected);
    std::size_t gained = 0;
    for (Vertex x = 0; x < kVertices; ++x) gained += expected[x] != 0 ? 1 : 0;
    EXPECT_GE(written, gained);  // a vertex gaining twice may be written twice, never less
    for (Vertex x = 0; x < kVertices; ++x) {
      NodeId node = x;
      while (forest.parent(node) != kNoNode) node = forest.parent(node);
      ASSERT_EQ(forest.top(x), node) << "vertex " << x;
    }
  }
}

}  // namespace
}  // namespace yoke
