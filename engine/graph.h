// The graph store: dense vertices, edges in a flat array, per-vertex incidence lists.
//
// Cost: add_vertex and add_edge are amortised O(1); incident(v) is O(1). The store never hands
// out pointers that a later insertion could invalidate except the spans of incident(), which
// stay valid until the next mutation of that vertex.
#pragma once

#include <span>
#include <vector>

#include "types.h"

namespace yoke {

struct Edge {
  Vertex a;
  Vertex b;
  Weight w;

  Vertex other(Vertex v) const { return v == a ? b : a; }
};

// One end of an edge as seen from a vertex: the vertex at the far end, the edge's index and a
// copy of its weight (the search reads it for every edge it scans).
struct Incidence {
  Vertex other;
  EdgeIndex edge;
  Weight w;
};

class Graph {
 public:
  Graph() = default;
  explicit Graph(std::size_t vertex_count) : incidence_(vertex_count) {}

  // Builds a graph in one pass with exactly sized incidence lists. Preconditions (checked by
  // the loaders, not here): endpoints < vertex_count, no self loops, no duplicate edges.
  static Graph from_edges(std::size_t vertex_count, std::vector<Edge> edges);

  Vertex add_vertex();
  // Preconditions: a != b, both exist, {a, b} is not an edge yet.
  EdgeIndex add_edge(Vertex a, Vertex b, Weight w);

  std::size_t vertex_count() const { return incidence_.size(); }
  std::size_t edge_count() const { return edges_.size(); }
  const Edge& edge(EdgeIndex e) const { return edges_[e]; }
  const std::vector<Edge>& edges() const { return edges_; }
  std::span<const Incidence> incident(Vertex v) const { return incidence_[v]; }

 private:
  std::vector<Edge> edges_;
  std::vector<std::vector<Incidence>> incidence_;
};

}  // namespace yoke
