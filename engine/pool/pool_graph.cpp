#include "pool/pool_graph.h"

#include <algorithm>

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
  const Vertex v = reserve_slot();
  reserved_slots_.pop_back();
  key_to_slot_.insert(key, v);
  slot_key_[v] = key;
  slot_alive_[v] = 1;
  return v;
}

Vertex PoolGraph::reserve_slot() {
  Vertex v;
  if (!free_slots_.empty()) {
    v = free_slots_.top();
    free_slots_.pop();
  } else {
    if (next_unused_ == capacity()) {
      // At least the initial room: a pool restored from a state with no slots has capacity 0.
      const std::size_t grown = std::max(2 * capacity(), kInitialCapacity);
      graph_.grow_vertices(grown);
      slot_key_.resize(grown, 0);
      slot_alive_.resize(grown, 0);
    }
    v = static_cast<Vertex>(next_unused_++);
  }
  reserved_slots_.push_back(v);
  return v;
}

bool PoolGraph::claim_reserved(Vertex v) {
  decltype(free_slots_) others;
  bool found = false;
  for (; !free_slots_.empty(); free_slots_.pop()) {
    if (free_slots_.top() == v) {
      found = true;
    } else {
      others.push(free_slots_.top());
    }
  }
  free_slots_ = std::move(others);
  if (found) reserved_slots_.push_back(v);
  return found;
}

void PoolGraph::release_reserved(Vertex v) {
  std::erase(reserved_slots_, v);
  freed_slots_.push_back(v);
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

void PoolGraph::order_slots_by_locality() {
  const std::size_t n = capacity();
  constexpr Vertex kUnnumbered = kNoVertex;
  std::vector<Vertex> new_of_old(n, kUnnumbered);
  std::vector<Vertex> queue;  // the live slots in their new order
  queue.reserve(key_to_slot_.size());
  for (Vertex start = 0; start < n; ++start) {
    if (!alive(start) || new_of_old[start] != kUnnumbered) continue;
    new_of_old[start] = static_cast<Vertex>(queue.size());
    queue.push_back(start);
    for (std::size_t head = queue.size() - 1; head < queue.size(); ++head) {
      for (const Incidence& inc : graph_.incident(queue[head])) {
        if (new_of_old[inc.other] != kUnnumbered) continue;
        new_of_old[inc.other] = static_cast<Vertex>(queue.size());
        queue.push_back(inc.other);
      }
    }
  }
  // Dead slots keep their order after the live ones: the used ones first, then those never
  // used, so next_unused_ still splits them.
  Vertex next = static_cast<Vertex>(queue.size());
  std::size_t used_dead = 0;
  for (Vertex v = 0; v < n; ++v) {
    if (new_of_old[v] != kUnnumbered) continue;
    new_of_old[v] = next++;
    if (v < next_unused_) ++used_dead;
  }
  next_unused_ = queue.size() + used_dead;

  graph_.renumber(new_of_old);
  std::vector<VertexKey> slot_key(n, 0);
  std::vector<std::uint8_t> slot_alive(n, 0);
  key_to_slot_ = FlatMap();
  for (Vertex v = 0; v < n; ++v) {
    slot_key[new_of_old[v]] = slot_key_[v];
    slot_alive[new_of_old[v]] = slot_alive_[v];
    if (slot_alive_[v] != 0) key_to_slot_.insert(slot_key_[v], new_of_old[v]);
  }
  slot_key_ = std::move(slot_key);
  slot_alive_ = std::move(slot_alive);
  decltype(free_slots_) free_slots;
  for (; !free_slots_.empty(); free_slots_.pop()) free_slots.push(new_of_old[free_slots_.top()]);
  free_slots_ = std::move(free_slots);
  for (Vertex& v : freed_slots_) v = new_of_old[v];
  edge_of_pair_ = FlatMap();
  for (EdgeIndex e = 0; e < graph_.edge_slots(); ++e) {
    if (graph_.is_live(e)) edge_of_pair_.insert(pair_key(graph_.edge(e).a, graph_.edge(e).b), e);
  }
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

void PoolGraph::save(ByteWriter& out) const {
  graph_.save(out);
  out.put_vector(slot_key_);
  out.put_vector(slot_alive_);
  auto free_slots = free_slots_;
  std::vector<Vertex> free_list;
  while (!free_slots.empty()) {
    free_list.push_back(free_slots.top());
    free_slots.pop();
  }
  free_list.insert(free_list.end(), freed_slots_.begin(), freed_slots_.end());
  free_list.insert(free_list.end(), reserved_slots_.begin(), reserved_slots_.end());
  out.put_vector(free_list);
  out.put<std::uint64_t>(next_unused_);
}

PoolGraph PoolGraph::load(ByteReader& in) {
  PoolGraph pool;
  pool.graph_ = Graph::load(in);
  const std::size_t n = pool.graph_.vertex_count();
  pool.slot_key_ = in.get_vector<VertexKey>(n);
  pool.slot_alive_ = in.get_vector<std::uint8_t>(n);
  if (pool.slot_key_.size() != n || pool.slot_alive_.size() != n) ByteReader::fail("slot arrays have the wrong length");
  for (Vertex v : in.get_vector<Vertex>(n)) {
    if (v >= n || pool.slot_alive_[v] != 0) ByteReader::fail("a free slot is alive");
    pool.free_slots_.push(v);
  }
  pool.next_unused_ = in.get<std::uint64_t>();
  if (pool.next_unused_ > n) ByteReader::fail("the first unused slot is past the capacity");
  for (Vertex v = 0; v < n; ++v) {
    if (pool.slot_alive_[v] == 0) {
      if (!pool.graph_.incident(v).empty()) ByteReader::fail("a dead slot has edges");
      continue;
    }
    if (v >= pool.next_unused_) ByteReader::fail("an alive slot lies past the used ones");
    if (pool.key_to_slot_.find(pool.slot_key_[v]) != FlatMap::kAbsent) ByteReader::fail("two slots share a key");
    pool.key_to_slot_.insert(pool.slot_key_[v], v);
  }
  for (EdgeIndex e = 0; e < pool.graph_.edge_slots(); ++e) {
    if (!pool.graph_.is_live(e)) continue;
    const Edge& edge = pool.graph_.edge(e);
    if (pool.edge_of_pair_.find(pair_key(edge.a, edge.b)) != FlatMap::kAbsent) ByteReader::fail("an edge is there twice");
    pool.edge_of_pair_.insert(pair_key(edge.a, edge.b), e);
  }
  return pool;
}

}  // namespace yoke
