// A plain model of what the ingest path promises (proto/yoke/v1/events.proto, protocol.proto,
// engine/include/yoke/pool.h), written apart from the daemon and the engine so the fuzz target can hold the
// real code to it: which events a pool takes, the weight bound each mode keeps exact, and the
// optimum of a tiny graph by brute force.
#pragma once

#include <cstddef>
#include <map>
#include <optional>
#include <set>
#include <utility>
#include <vector>

#include "yoke/events.h"
#include "yoke/pool.h"
#include "yoke/v1/protocol.pb.h"

namespace yoke::fuzz {

using EdgeKey = std::pair<VertexKey, VertexKey>;  // (smaller key, larger key)

inline EdgeKey edge_key(VertexKey a, VertexKey b) { return a < b ? EdgeKey{a, b} : EdgeKey{b, a}; }

struct ModelGraph {
  std::set<VertexKey> alive;
  std::map<EdgeKey, Weight> edges;
  // Held pairs (engine/include/yoke/events.h, hold_pair), both ways: held[u] == v and held[v] == u. A
  // hold ends with release_pair, unset_edge of its edge or remove_vertex of either end.
  std::map<VertexKey, VertexKey> held;
};

// What a pool's checks count within one batching window. The edge limit counts insertions minus
// unsets, not edges alive (DEVELOPERS.md, "Limits"): the edges of a vertex removed in the window
// do not free their places until the window is committed.
struct WindowCount {
  std::size_t base_edges = 0;  // edges alive when the window opened
  std::size_t insertions = 0;  // edges inserted by the window's events so far
  std::size_t unsets = 0;      // edges unset by the window's events so far
};

// Applies `event` to `graph` and returns nothing, or returns (leaving `graph` half changed: use a
// copy) every code that may refuse it; the daemon must name one of them. The limits are not
// checked here: BatchLimits does, at the end of the batch.
std::vector<v1::Error::Code> apply_event(ModelGraph& graph, WindowCount& count,
                                         const PoolLimits& limits, const Event& event);

// The limits hold at the end of a batch (protocol.proto, POOL_LIMIT_EXCEEDED): a batch that ends
// above a limit is refused, naming the event from which that count stayed above it (the earlier
// of the two when both are above).
class BatchLimits {
 public:
  explicit BatchLimits(const PoolLimits& limits) : limits_(limits) {}
  // After event `index` was applied to `graph` and `count`.
  void after_event(std::size_t index, const ModelGraph& graph, const WindowCount& count);
  // The event to name when the batch ends here, or nothing when it ends within the limits.
  std::optional<std::size_t> refused_at() const;

 private:
  PoolLimits limits_;
  bool vertices_above_ = false, edges_above_ = false;
  std::size_t vertices_crossed_ = 0, edges_crossed_ = 0;
};

// The bound on |w| that a limit of 0 stands for (DEVELOPERS.md, "Inside the pool", Limits).
Weight largest_weight(Mode mode, std::size_t max_vertices);

struct Optimum {
  std::size_t pairs = 0;
  Weight weight = 0;
};

// The optimum by dynamic programming over vertex subsets: the most weight (max-weight), or the
// most pairs and then the most weight (max-cardinality, perfect). Held pairs are matched
// whatever they cost, and the rest is optimised without their ends ("around" them). Nothing above
// `max_vertices` vertices (its cost is 2^n x n).
std::optional<Optimum> brute_force_optimum(const ModelGraph& graph, Mode mode,
                                           std::size_t max_vertices);

}  // namespace yoke::fuzz
