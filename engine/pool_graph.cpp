#include "pool_graph.h"

namespace yoke {

namespace {
constexpr std::size_t kInitialCapacity = 64;
}

PoolGraph::PoolGraph()
    : graph_(kInitialCapacity), slot_key_(kInitialCapacity, 0), slot_alive_(kInitialCapacity, 0) {
  graph_.track_positions();
}

Vertex PoolGraph::find(VertexKey key) const {
  const std::uint32_t v = key_to_slot_.find(key);
  return v == FlatMap::kAbsent ? kNoVertex : v;
}

Vertex PoolGraph::add_vertex(VertexKey key) {
  Vertex v;
  if (!free_slots_.empty()) {
    v = free_slots_.top();
    free_slots_.pop();
  } else {
    if (next_unused_ == capacity()) {
      const std::size_t grown = 2 * capacity();
      graph_.grow_vertices(grown);
      slot_key_.resize(grown, 0);
      slot_alive_.resize(grown, 0);
    }
    v = static_cast<Vertex>(next_unused_++);
  }
  key_to_slot_.insert(key, v);
  slot_key_[v] = key;
  slot_alive_[v] = 1;
  return v;
}

void PoolGraph::remove_vertex(Vertex v) {
  key_to_slot_.erase(slot_key_[v]);
  slot_alive_[v] = 0;
  freed_slots_.push_back(v);
}

void PoolGraph::release_slots() {
  for (Vertex v : freed_slots_) free_slots_.push(v);
  freed_slots_.clear();
}

EdgeIndex PoolGraph::find_edge(Vertex a, Vertex b) const {
  const std::uint32_t e = edge_of_pair_.find(pair_key(a, b));
  return e == FlatMap::kAbsent ? kNoEdge : e;
}

EdgeIndex PoolGraph::add_edge(Vertex a, Vertex b, Weight w) {
  const EdgeIndex e = graph_.add_edge(a, b, w);
  edge_of_pair_.insert(pair_key(a, b), e);
  return e;
}

void PoolGraph::remove_edge(EdgeIndex e) {
  const Edge& edge = graph_.edge(e);
  edge_of_pair_.erase(pair_key(edge.a, edge.b));
  graph_.remove_edge(e);
}

}  // namespace yoke
