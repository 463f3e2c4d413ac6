// Pool::check: the first event of a batch that cannot be applied, found without touching the
// pool. Changes made by earlier events of the batch are tracked on the side.
#include <string>
#include <unordered_map>

#include "pool_state.h"

namespace yoke {
namespace {

std::string text(VertexKey key) { return std::to_string(key); }

class BatchCheck {
 public:
  explicit BatchCheck(const PoolState& pool) : pool_(pool) {}

  std::optional<std::string> check(const Event& event) {
    switch (event.kind) {
      case EventKind::add_vertex:
        if (exists(event.u)) return "vertex " + text(event.u) + " already exists";
        return arrive(event.u);
      case EventKind::set_edge: {
        if (event.u == event.v) return "self loop at vertex " + text(event.u);
        const Weight bound = pool_.limits.max_abs_weight;
        if (event.w > bound || event.w < -bound) {
          return "weight " + std::to_string(event.w) + " of edge {" + text(event.u) + ", " +
                 text(event.v) + "} is out of range: |w| must be at most " + std::to_string(bound);
        }
        if (!exists(event.u)) {
          if (auto error = arrive(event.u)) return error;
        }
        if (!exists(event.v)) {
          if (auto error = arrive(event.v)) return error;
        }
        if (!edge_exists(event.u, event.v)) {
          if (pool_.graph.edge_count() + ++edges_added_ > pool_.limits.max_edges) {
            return "the pool would exceed its limit of " + std::to_string(pool_.limits.max_edges) +
                   " edges";
          }
        }
        edge_override_[edge_key(event.u, event.v)] = true;
        return std::nullopt;
      }
      case EventKind::unset_edge:
        if (!exists(event.u)) return "unset names unknown vertex " + text(event.u);
        if (!exists(event.v)) return "unset names unknown vertex " + text(event.v);
        if (!edge_exists(event.u, event.v)) {
          return "there is no edge {" + text(event.u) + ", " + text(event.v) + "} to unset";
        }
        edge_override_[edge_key(event.u, event.v)] = false;
        return std::nullopt;
      case EventKind::remove_vertex:
        if (!exists(event.u)) return "remove names unknown vertex " + text(event.u);
        vertex_[event.u].alive = false;
        ++vertex_[event.u].generation;  // its edges go with it
        --alive_change_;
        return std::nullopt;
    }
    return "unknown event kind";
  }

 private:
  struct VertexState {
    bool alive;
    std::uint32_t generation;  // removals in this batch: edge overrides of older ones are void
  };
  struct EdgeKey {
    VertexKey low, high;
    std::uint32_t low_generation, high_generation;
    bool operator==(const EdgeKey&) const = default;
  };
  struct EdgeKeyHash {
    std::size_t operator()(const EdgeKey& k) const {
      return std::hash<VertexKey>()(k.low * 0x9e3779b97f4a7c15ULL ^ k.high) ^
             (std::size_t{k.low_generation} << 7) ^ k.high_generation;
    }
  };

  bool exists(VertexKey key) const {
    const auto it = vertex_.find(key);
    return it != vertex_.end() ? it->second.alive : pool_.graph.find(key) != kNoVertex;
  }
  std::uint32_t generation(VertexKey key) const {
    const auto it = vertex_.find(key);
    return it == vertex_.end() ? 0 : it->second.generation;
  }
  std::optional<std::string> arrive(VertexKey key) {
    if (static_cast<std::ptrdiff_t>(pool_.graph.vertex_count()) + ++alive_change_ >
        static_cast<std::ptrdiff_t>(pool_.limits.max_vertices)) {
      return "the pool would exceed its limit of " + std::to_string(pool_.limits.max_vertices) +
             " vertices";
    }
    vertex_[key].alive = true;
    return std::nullopt;
  }
  EdgeKey edge_key(VertexKey a, VertexKey b) const {
    if (a > b) std::swap(a, b);
    return {a, b, generation(a), generation(b)};
  }
  bool edge_exists(VertexKey a, VertexKey b) const {
    const auto it = edge_override_.find(edge_key(a, b));
    if (it != edge_override_.end()) return it->second;
    if (generation(a) != 0 || generation(b) != 0) return false;  // an end left in this batch
    const Vertex va = pool_.graph.find(a);
    const Vertex vb = pool_.graph.find(b);
    return va != kNoVertex && vb != kNoVertex && pool_.graph.find_edge(va, vb) != kNoEdge;
  }

  const PoolState& pool_;
  std::unordered_map<VertexKey, VertexState> vertex_;
  std::unordered_map<EdgeKey, bool, EdgeKeyHash> edge_override_;
  std::ptrdiff_t alive_change_ = 0;  // arrivals minus departures so far
  // Edges inserted so far; removals do not count (a departure's edges are not enumerated), so
  // the edge limit is checked conservatively.
  std::size_t edges_added_ = 0;
};

}  // namespace

std::optional<EventError> Pool::check(std::span<const Event> batch) const {
  BatchCheck checker(*state_);
  for (std::size_t i = 0; i < batch.size(); ++i) {
    if (auto message = checker.check(batch[i])) return EventError{i, std::move(*message)};
  }
  return std::nullopt;
}

}  // namespace yoke
