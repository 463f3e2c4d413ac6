#include "graph.h"

namespace yoke {

Graph Graph::from_edges(std::size_t vertex_count, std::vector<Edge> edges) {
  Graph graph;
  std::vector<std::uint32_t> degree(vertex_count, 0);
  for (const Edge& e : edges) {
    ++degree[e.a];
    ++degree[e.b];
  }
  graph.incidence_.resize(vertex_count);
  for (std::size_t v = 0; v < vertex_count; ++v) graph.incidence_[v].reserve(degree[v]);
  for (std::size_t i = 0; i < edges.size(); ++i) {
    const auto index = static_cast<EdgeIndex>(i);
    graph.incidence_[edges[i].a].push_back({edges[i].b, index, edges[i].w});
    graph.incidence_[edges[i].b].push_back({edges[i].a, index, edges[i].w});
  }
  graph.edges_ = std::move(edges);
  return graph;
}

Vertex Graph::add_vertex() {
  incidence_.emplace_back();
  return static_cast<Vertex>(incidence_.size() - 1);
}

EdgeIndex Graph::add_edge(Vertex a, Vertex b, Weight w) {
  const auto index = static_cast<EdgeIndex>(edges_.size());
  edges_.push_back({a, b, w});
  incidence_[a].push_back({b, index, w});
  incidence_[b].push_back({a, index, w});
  return index;
}

}  // namespace yoke
