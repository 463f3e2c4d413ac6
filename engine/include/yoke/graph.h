// The graph store: dense vertices, edges in a flat array, per-vertex incidence lists in one
// flat arena (IncidenceLists: a vertex's entries are contiguous, lists lie in vertex order).
//
// Cost: add_vertex and add_edge are amortised O(1); incident(v) is O(1); with positions
// tracked (track_positions), set_weight and remove_edge are O(1) too. The store never hands out
// pointers that a later mutation could invalidate except the spans of incident(), which stay
// valid until the next mutation of the graph (a new edge may move lists in the arena).
#pragma once

#include <span>
#include <vector>

#include "yoke/incidence_lists.h"
#include "yoke/types.h"
#include "yoke/util/byte_io.h"

namespace yoke {

struct Edge {
  Vertex a;
  Vertex b;
  Weight w;

  Vertex other(Vertex v) const { return v == a ? b : a; }
};

class Graph {
 public:
  Graph() = default;
  explicit Graph(std::size_t vertex_count) : lists_(vertex_count) {}

  // Builds a graph in one pass with exactly sized incidence lists. Preconditions (checked by
  // the loaders, not here): endpoints < vertex_count, no self loops, no duplicate edges.
  static Graph from_edges(std::size_t vertex_count, std::vector<Edge> edges);

  Vertex add_vertex();
  // Adds isolated vertices up to `vertex_count` (a pool grows its capacity this way).
  void grow_vertices(std::size_t vertex_count);
  // Preconditions: both ends exist, {a, b} is not an edge yet. A self loop (a == b) is stored as
  // given: the loaders refuse them before the solvers see a graph, and the certificate checker
  // rejects a graph that holds one (its tests build such graphs). Reuses the slot of a removed
  // edge when there is one.
  EdgeIndex add_edge(Vertex a, Vertex b, Weight w);

  // From now on, remember where each edge sits in its ends' incidence lists, so that weight
  // changes and removals cost O(1). O(m) once.
  void track_positions();
  // Preconditions: positions are tracked, e is live.
  void set_weight(EdgeIndex e, Weight w);
  void remove_edge(EdgeIndex e);
  // Lays the incidence lists out in vertex order again once enough of them have moved to the
  // arena's end by growing (IncidenceLists::tidy); incidence order within each list is kept.
  // O(1), or O(n + m) paid for by the Omega(n + m) moves since the last time. A caller calls
  // it between mutations and searches (PoolGraph::tidy_layout, before a repair).
  void tidy_incidence() { lists_.tidy(); }
  // Gives vertex v the number new_of_old[v] (a permutation of 0..n-1); edge indices, weights
  // and the order of each incidence list stay. O(n + m).
  void renumber(std::span<const Vertex> new_of_old);

  std::size_t vertex_count() const { return lists_.vertex_count(); }
  std::size_t edge_count() const { return edges_.size() - free_edges_.size(); }
  // Edge slots in use or freed: edges() holds removed slots (a == kNoVertex) once an edge was
  // removed; is_live tells them apart.
  std::size_t edge_slots() const { return edges_.size(); }
  bool is_live(EdgeIndex e) const { return edges_[e].a != kNoVertex; }
  const Edge& edge(EdgeIndex e) const { return edges_[e]; }
  const std::vector<Edge>& edges() const { return edges_; }
  std::span<const Incidence> incident(Vertex v) const { return lists_.of(v); }

  // The whole store, incidence order included (the search's order follows it), and back.
  // load() checks that the bytes describe a consistent graph and throws InputError otherwise.
  void save(ByteWriter& out) const;
  static Graph load(ByteReader& in);

 private:
  struct Positions {
    std::uint32_t in_a;  // position of the edge's entry in a's list
    std::uint32_t in_b;
  };
  void remove_incidence(Vertex v, std::uint32_t at);

  std::vector<Edge> edges_;
  IncidenceLists lists_;
  bool tracking_ = false;
  std::vector<Positions> positions_;  // per edge slot, while tracking
  std::vector<EdgeIndex> free_edges_;  // removed slots, reused last-in first-out
};

}  // namespace yoke
