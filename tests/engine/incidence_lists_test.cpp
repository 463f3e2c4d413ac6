// The flat incidence storage (IncidenceLists, and Graph on top of it) against a plain model:
// per-vertex vectors with the same swap-remove rule, after random add / remove / reweigh
// sequences that grow lists past their room, empty them, and rebuild the arena.
#include "yoke/incidence_lists.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "tools/graphgen/rng.h"
#include "pool/pool_graph.h"
#include "yoke/graph.h"
#include "yoke/util/byte_io.h"

namespace yoke {
namespace {

using Model = std::vector<std::vector<Incidence>>;

bool same_entry(const Incidence& x, const Incidence& y) {
  return x.other == y.other && x.edge == y.edge && x.w == y.w;
}

void expect_lists_match(const IncidenceLists& lists, const Model& model) {
  ASSERT_EQ(lists.vertex_count(), model.size());
  std::size_t entries = 0;
  for (Vertex v = 0; v < model.size(); ++v) {
    const std::span<const Incidence> got = lists.of(v);
    ASSERT_EQ(got.size(), model[v].size()) << "vertex " << v;
    ASSERT_LE(got.size(), lists.room(v));
    for (std::size_t i = 0; i < got.size(); ++i) {
      ASSERT_TRUE(same_entry(got[i], model[v][i])) << "vertex " << v << " position " << i;
    }
    entries += got.size();
  }
  EXPECT_EQ(lists.entries(), entries);
}

// Removes position `at` of the model's list as IncidenceLists::remove does.
void model_remove(std::vector<Incidence>& list, std::uint32_t at) {
  list[at] = list.back();
  list.pop_back();
}

TEST(IncidenceLists, EmptyListsHaveNoRoom) {
  IncidenceLists lists(3);
  EXPECT_EQ(lists.of(0).size(), 0u);
  EXPECT_EQ(lists.room(2), 0u);
  EXPECT_EQ(lists.entries(), 0u);
  lists.compact();
  EXPECT_EQ(lists.of(1).size(), 0u);
}

TEST(IncidenceLists, RemovingTheLastAndTheFirstEntry) {
  IncidenceLists lists(2);
  for (std::uint32_t i = 0; i < 5; ++i) lists.push(0, {1, i, 10 + i});
  // The last position: nothing moves.
  EXPECT_EQ(lists.remove(0, 4), nullptr);
  // The first position: the last entry (edge 3) fills it.
  const Incidence* moved = lists.remove(0, 0);
  ASSERT_NE(moved, nullptr);
  EXPECT_EQ(moved->edge, 3u);
  const std::vector<EdgeIndex> expected{3, 1, 2};
  ASSERT_EQ(lists.of(0).size(), expected.size());
  for (std::size_t i = 0; i < expected.size(); ++i) EXPECT_EQ(lists.of(0)[i].edge, expected[i]);
  // Down to empty, and growing again from there.
  while (!lists.of(0).empty()) lists.remove(0, 0);
  EXPECT_EQ(lists.entries(), 0u);
  EXPECT_EQ(lists.push(0, {1, 9, 1}), 0u);
  EXPECT_EQ(lists.of(0)[0].edge, 9u);
}

TEST(IncidenceLists, GrowingPastItsRoomMovesAListIntact) {
  const std::vector<std::uint32_t> room{1, 2, 0};
  IncidenceLists lists = IncidenceLists::with_room(room);
  Model model(3);
  // Vertex 1's neighbours in the arena are exactly sized: every growth of vertex 0 must move it
  // without touching vertex 1's entries.
  lists.push(1, {0, 100, 5});
  model[1].push_back({0, 100, 5});
  for (std::uint32_t i = 0; i < 40; ++i) {
    EXPECT_EQ(lists.push(0, {2, i, -static_cast<Weight>(i)}), i);
    model[0].push_back({2, i, -static_cast<Weight>(i)});
    expect_lists_match(lists, model);
  }
  EXPECT_GE(lists.room(0), 40u);
}

TEST(IncidenceLists, AgreesWithPlainVectors) {
  for (std::uint64_t seed = 1; seed <= 12; ++seed) {
    gen::Rng rng(seed);
    const std::size_t n = 1 + rng.below(40);
    IncidenceLists lists(n);
    Model model(n);
    std::uint32_t next_edge = 0;
    for (int step = 0; step < 4000; ++step) {
      const std::uint64_t roll = rng.below(100);
      const auto v = static_cast<Vertex>(rng.below(model.size()));
      if (roll < 55) {
        const Incidence entry{static_cast<Vertex>(rng.below(model.size())), next_edge++,
                              static_cast<Weight>(rng.below(1000)) - 500};
        EXPECT_EQ(lists.push(v, entry), model[v].size());
        model[v].push_back(entry);
      } else if (roll < 85) {
        if (model[v].empty()) continue;
        // Often the first or the last position, the swap-remove's edge cases.
        const std::uint64_t pick = rng.below(4);
        const auto at = static_cast<std::uint32_t>(
            pick == 0 ? 0 : pick == 1 ? model[v].size() - 1 : rng.below(model[v].size()));
        const Incidence* moved = lists.remove(v, at);
        const bool was_last = at + 1 == model[v].size();
        model_remove(model[v], at);
        if (was_last) {
          EXPECT_EQ(moved, nullptr);
        } else {
          ASSERT_NE(moved, nullptr);
          EXPECT_TRUE(same_entry(*moved, model[v][at]));
        }
      } else if (roll < 95) {
        if (model[v].empty()) continue;
        const auto at = static_cast<std::uint32_t>(rng.below(model[v].size()));
        const Weight w = static_cast<Weight>(rng.below(1000));
        lists.at(v, at).w = w;
        model[v][at].w = w;
      } else if (roll < 97) {
        const std::size_t grown = model.size() + 1 + rng.below(5);
        lists.grow_vertices(grown);
        model.resize(grown);
      } else if (roll < 98) {
        lists.compact();
      } else {
        lists.tidy();
      }
      if (step % 97 == 0) expect_lists_match(lists, model);
    }
    expect_lists_match(lists, model);
    lists.compact();
    expect_lists_match(lists, model);
  }
}

// A rebuild leaves every list with slack, and puts lists back in vertex order.
TEST(IncidenceLists, CompactLeavesSlackInVertexOrder) {
  IncidenceLists lists(4);
  for (std::uint32_t i = 0; i < 30; ++i) lists.push(static_cast<Vertex>(i % 4), {0, i, 1});
  lists.compact();
  for (Vertex v = 0; v < 4; ++v) EXPECT_GT(lists.room(v), lists.of(v).size());
  for (Vertex v = 0; v + 1 < 4; ++v) EXPECT_LT(lists.of(v).data(), lists.of(v + 1).data());
  EXPECT_EQ(lists.arena_size(), lists.room(0) + lists.room(1) + lists.room(2) + lists.room(3));
}

// A stream's rebuilds (tidy()) keep the block they leave and copy into it next time, once it
// has room (its pages are mapped already): a list that grows by 100 entries and shrinks back,
// round after round, against the model; compact() and a copy keep no spare.
TEST(IncidenceLists, AStreamsRebuildsReuseTheBlockTheOneBeforeLeft) {
  Model model(5);
  IncidenceLists lists(5);
  for (std::uint32_t i = 0; i < 200; ++i) {
    const Incidence entry{static_cast<Vertex>(i % 7), i, static_cast<Weight>(i * 3)};
    lists.push(static_cast<Vertex>(i % 5), entry);
    model[i % 5].push_back(entry);
  }
  lists.compact();
  EXPECT_EQ(lists.spare_capacity(), 0u);
  std::vector<const Incidence*> bases;
  for (std::uint32_t round = 0; round < 12; ++round) {
    const auto v = static_cast<Vertex>(round % 5);
    for (std::uint32_t i = 0; i < 100; ++i) {
      const Incidence entry{7, 1000 + i, static_cast<Weight>(round)};
      lists.push(v, entry);
      model[v].push_back(entry);
    }
    lists.tidy();  // the pushes rebuilt the arena to grow it, or the moves make tidy() do it
    EXPECT_GT(lists.spare_capacity(), 0u);
    bases.push_back(lists.of(0).data());  // list 0 is first in the rebuilt arena
    expect_lists_match(lists, model);
    for (std::uint32_t i = 0; i < 100; ++i) {
      lists.remove(v, static_cast<std::uint32_t>(model[v].size() - 1));
      model[v].pop_back();
    }
  }
  // From the third round on, each rebuild copies into the block the one before left.
  for (std::size_t round = 3; round < bases.size(); ++round) {
    EXPECT_EQ(bases[round], bases[round - 2]) << "round " << round;
  }
  IncidenceLists copy = lists;
  EXPECT_EQ(copy.spare_capacity(), 0u);
  expect_lists_match(copy, model);
  lists.compact();
  EXPECT_EQ(lists.spare_capacity(), 0u);
  expect_lists_match(lists, model);
}

// Graph on the flat storage: random edge insertions, removals and weight changes against a map
// of the live edges; every incidence entry must name a live edge, its other end and its weight.
void expect_graph_matches(const Graph& graph, const std::map<EdgeIndex, Edge>& live) {
  ASSERT_EQ(graph.edge_count(), live.size());
  std::size_t seen = 0;
  for (Vertex v = 0; v < graph.vertex_count(); ++v) {
    for (const Incidence& inc : graph.incident(v)) {
      const auto it = live.find(inc.edge);
      ASSERT_NE(it, live.end()) << "vertex " << v << " lists a dead edge " << inc.edge;
      const Edge& e = it->second;
      ASSERT_TRUE(e.a == v || e.b == v);
      EXPECT_EQ(inc.other, e.other(v));
      EXPECT_EQ(inc.w, e.w);
      EXPECT_EQ(graph.edge(inc.edge).w, e.w);
      ++seen;
    }
  }
  EXPECT_EQ(seen, 2 * live.size());
}

TEST(GraphOnFlatLists, RandomEditsAgreeWithAMapOfEdges) {
  for (std::uint64_t seed = 1; seed <= 8; ++seed) {
    gen::Rng rng(seed, 7);
    const std::size_t n = 2 + rng.below(30);
    Graph graph(n);
    graph.track_positions();
    std::map<EdgeIndex, Edge> live;
    std::map<std::pair<Vertex, Vertex>, EdgeIndex> by_ends;
    for (int step = 0; step < 3000; ++step) {
      const std::uint64_t roll = rng.below(100);
      if (roll < 50) {
        const auto a = static_cast<Vertex>(rng.below(graph.vertex_count()));
        const auto b = static_cast<Vertex>(rng.below(graph.vertex_count()));
        if (a == b || by_ends.count({std::min(a, b), std::max(a, b)}) != 0) continue;
        const Weight w = static_cast<Weight>(rng.below(100));
        const EdgeIndex e = graph.add_edge(a, b, w);
        live[e] = {a, b, w};
        by_ends[{std::min(a, b), std::max(a, b)}] = e;
      } else if (roll < 80) {
        if (live.empty()) continue;
        auto it = live.begin();
        std::advance(it, static_cast<std::ptrdiff_t>(rng.below(live.size())));
        const Edge e = it->second;
        graph.remove_edge(it->first);
        by_ends.erase({std::min(e.a, e.b), std::max(e.a, e.b)});
        live.erase(it);
      } else if (roll < 97) {
        if (live.empty()) continue;
        auto it = live.begin();
        std::advance(it, static_cast<std::ptrdiff_t>(rng.below(live.size())));
        const Weight w = static_cast<Weight>(rng.below(100)) - 50;
        graph.set_weight(it->first, w);
        it->second.w = w;
      } else if (roll < 99) {
        graph.add_vertex();
      } else {
        graph.tidy_incidence();
      }
      if (step % 101 == 0) expect_graph_matches(graph, live);
    }
    expect_graph_matches(graph, live);
    // The saved form keeps the incidence order exactly.
    ByteWriter out;
    graph.save(out);
    const std::string bytes = out.take();
    ByteReader in(bytes);
    const Graph loaded = Graph::load(in);
    ASSERT_EQ(loaded.vertex_count(), graph.vertex_count());
    for (Vertex v = 0; v < graph.vertex_count(); ++v) {
      ASSERT_EQ(loaded.incident(v).size(), graph.incident(v).size());
      for (std::size_t i = 0; i < graph.incident(v).size(); ++i) {
        EXPECT_TRUE(same_entry(loaded.incident(v)[i], graph.incident(v)[i]));
      }
    }
  }
}

}  // namespace
}  // namespace yoke

namespace yoke {
namespace {

// The pool's slots renumbered for locality: every key keeps its edges and weights (read back by
// keys), live slots come first in breadth-first order, and a slot freed in the batch stays
// pending until release_slots().
TEST(PoolGraphSlotOrder, KeepsKeysEdgesAndPendingSlots) {
  PoolGraph graph;
  gen::Rng rng(11);
  std::map<std::pair<VertexKey, VertexKey>, Weight> edges;
  for (VertexKey key = 100; key < 180; ++key) graph.add_vertex(key);
  for (int i = 0; i < 300; ++i) {
    const VertexKey a = 100 + rng.below(80);
    const VertexKey b = 100 + rng.below(80);
    if (a == b || edges.count({std::min(a, b), std::max(a, b)}) != 0) continue;
    const auto w = static_cast<Weight>(rng.below(1000));
    graph.add_edge(graph.find(a), graph.find(b), w);
    edges[{std::min(a, b), std::max(a, b)}] = w;
  }
  // A vertex leaves in this batch: its slot must not be reused before the batch ends.
  const VertexKey gone = 140;
  const Vertex gone_slot = graph.find(gone);
  while (!graph.graph().incident(gone_slot).empty()) {
    const Incidence inc = graph.graph().incident(gone_slot).back();
    const VertexKey other = graph.key(inc.other);
    edges.erase({std::min(gone, other), std::max(gone, other)});
    graph.remove_edge(inc.edge);
  }
  graph.remove_vertex(gone_slot);

  graph.order_slots_by_locality();

  EXPECT_EQ(graph.vertex_count(), 79u);
  EXPECT_EQ(graph.find(gone), kNoVertex);
  for (VertexKey key = 100; key < 180; ++key) {
    if (key == gone) continue;
    const Vertex v = graph.find(key);
    ASSERT_NE(v, kNoVertex);
    EXPECT_LT(v, 79u) << "live slots come first";
    EXPECT_EQ(graph.key(v), key);
    EXPECT_TRUE(graph.alive(v));
  }
  std::size_t listed = 0;
  for (Vertex v = 0; v < graph.capacity(); ++v) {
    for (const Incidence& inc : graph.graph().incident(v)) {
      const VertexKey a = graph.key(v), b = graph.key(inc.other);
      const auto it = edges.find({std::min(a, b), std::max(a, b)});
      ASSERT_NE(it, edges.end());
      EXPECT_EQ(inc.w, it->second);
      EXPECT_EQ(graph.find_edge(v, inc.other), inc.edge);
      ++listed;
    }
  }
  EXPECT_EQ(listed, 2 * edges.size());
  EXPECT_EQ(graph.edge_count(), edges.size());
  // The pending slot is not handed out in this batch, and is after release_slots().
  const Vertex fresh = graph.add_vertex(500);
  EXPECT_FALSE(graph.find(500) == kNoVertex);
  graph.release_slots();
  const Vertex reused = graph.add_vertex(501);
  EXPECT_NE(fresh, reused);
  EXPECT_EQ(reused, 79u) << "the slot freed in the batch, now the lowest free one";
}

}  // namespace
}  // namespace yoke
