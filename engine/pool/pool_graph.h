// The pool's graph under the outside world's names: 64-bit vertex keys mapped to dense slots,
// edges found by their two ends in O(1). A freed slot is reused only after the commit that
// freed it, so that within one batch a slot always names the same vertex.
#pragma once

#include <cstdint>
#include <functional>
#include <queue>
#include <vector>

#include "yoke/events.h"
#include "yoke/graph.h"
#include "yoke/util/flat_map.h"

namespace yoke {

class PoolGraph {
 public:
  PoolGraph();

  const Graph& graph() const { return graph_; }
  // Slots, alive or not: the size of every per-vertex array of the pool.
  std::size_t capacity() const { return graph_.vertex_count(); }
  std::size_t vertex_count() const { return key_to_slot_.size(); }
  std::size_t edge_count() const { return graph_.edge_count(); }

  Vertex find(VertexKey key) const;  // kNoVertex when absent
  VertexKey key(Vertex v) const { return slot_key_[v]; }
  bool alive(Vertex v) const { return slot_alive_[v] != 0; }

  // Gives `key` a slot; the capacity doubles when no slot is free (the caller grows its own
  // per-vertex arrays to capacity()). Precondition: key is absent. Amortised O(1).
  Vertex add_vertex(VertexKey key);
  // Precondition: v has no edges left.
  void remove_vertex(Vertex v);
  // Makes the slots freed since the last call reusable.
  void release_slots();
  // A slot with no key, never alive and outside vertex_count(): the phantom vertex's
  // (docs/mathematics.md §9). Taken as add_vertex takes one (the capacity may double);
  // released like a removed vertex's; saved as a free slot.
  Vertex reserve_slot();
  void release_reserved(Vertex v);
  // After load(): takes free slot v back as reserved (a saved pool's phantom). False when v is
  // not a free slot. O(free slots).
  bool claim_reserved(Vertex v);

  EdgeIndex find_edge(Vertex a, Vertex b) const;  // kNoEdge when absent
  EdgeIndex add_edge(Vertex a, Vertex b, Weight w);
  void set_weight(EdgeIndex e, Weight w) { graph_.set_weight(e, w); }
  void remove_edge(EdgeIndex e);
  // Before a repair: lays the incidence lists out in order again when growth has scattered
  // them (Graph::tidy_incidence). Amortised O(1) per edge added.
  void tidy_layout() { graph_.tidy_incidence(); }
  // Renumbers the slots so that neighbours get nearby numbers (breadth first over the graph,
  // component by component from the lowest slot; dead slots after the live ones), so that a
  // search reading every per-vertex array touches few cache lines and pages. Keys, edges and
  // weights stay; slots freed in this batch stay pending. O(capacity + m). Precondition: no
  // state outside this graph refers to a slot (the pool's first batch, before its solve).
  void order_slots_by_locality();

  // Everything, between commits (no slot freed in a batch still pending), and back; the maps
  // are rebuilt from the slots and edges. load() throws InputError on inconsistent bytes.
  void save(ByteWriter& out) const;
  static PoolGraph load(ByteReader& in);

 private:
  static std::uint64_t pair_key(Vertex a, Vertex b) {
    return a < b ? (std::uint64_t{a} << 32) | b : (std::uint64_t{b} << 32) | a;
  }

  Graph graph_;
  FlatMap key_to_slot_;   // vertex key -> slot
  FlatMap edge_of_pair_;  // pair_key(a, b) -> edge
  std::vector<VertexKey> slot_key_;
  std::vector<std::uint8_t> slot_alive_;
  std::priority_queue<Vertex, std::vector<Vertex>, std::greater<>> free_slots_;  // lowest first
  std::vector<Vertex> freed_slots_;    // freed in the current batch
  std::vector<Vertex> reserved_slots_;  // reserve_slot's, not released yet
  std::size_t next_unused_ = 0;        // slots >= this were never used
};

}  // namespace yoke
