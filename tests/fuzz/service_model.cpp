#include "service_model.h"

#include <algorithm>
#include <cstdint>

namespace yoke::fuzz {
namespace {

using Code = v1::Error::Code;


// Ends the hold of `key`, if any, on both of its ends.
void release(ModelGraph& graph, VertexKey key) {
  const auto it = graph.held.find(key);
  if (it == graph.held.end()) return;
  graph.held.erase(it->second);
  graph.held.erase(it);
}

}  // namespace

std::vector<Code> apply_event(ModelGraph& graph, WindowCount& count, const PoolLimits& limits,
                              const Event& event) {
  const auto alive = [&graph](VertexKey key) { return graph.alive.count(key) != 0; };
  switch (event.kind) {
    case EventKind::add_vertex:
      if (alive(event.u)) return {v1::Error::VERTEX_EXISTS};
      graph.alive.insert(event.u);  // the limits are checked after the batch (BatchLimits)
      return {};
    case EventKind::set_edge: {
      std::vector<Code> codes;
      if (event.u == event.v) codes.push_back(v1::Error::SELF_LOOP);
      if (event.w > limits.max_abs_weight || event.w < -limits.max_abs_weight) {
        codes.push_back(v1::Error::WEIGHT_OUT_OF_RANGE);
      }
      if (!codes.empty()) return codes;
      graph.alive.insert(event.u);
      graph.alive.insert(event.v);
      const EdgeKey key = edge_key(event.u, event.v);
      if (graph.edges.count(key) == 0) ++count.insertions;
      graph.edges[key] = event.w;
      return {};
    }
    case EventKind::unset_edge: {
      // protocol.proto: SELF_LOOP is "a SET_EDGE, UNSET_EDGE, HOLD_PAIR or RELEASE_PAIR
      // with u == v".
      if (event.u == event.v) return {v1::Error::SELF_LOOP};
      // protocol.proto: UNKNOWN_EDGE is "UNSET_EDGE ... of an edge that does not exist", also
      // when an end is not alive.
      if (graph.edges.erase(edge_key(event.u, event.v)) == 0) return {v1::Error::UNKNOWN_EDGE};
      ++count.unsets;
      // events.proto: unsetting a held pair's edge ends the hold.
      const auto hold = graph.held.find(event.u);
      if (hold != graph.held.end() && hold->second == event.v) release(graph, event.u);
      return {};
    }
    // The pool checks a hold or release in this order: self loop, u then v alive, the edge (hold
    // only), then the holds.
    case EventKind::hold_pair:
      if (event.u == event.v) return {v1::Error::SELF_LOOP};
      if (!alive(event.u) || !alive(event.v)) return {v1::Error::UNKNOWN_VERTEX};
      if (graph.edges.count(edge_key(event.u, event.v)) == 0) return {v1::Error::UNKNOWN_EDGE};
      if (graph.held.count(event.u) != 0 || graph.held.count(event.v) != 0) {
        return {v1::Error::ALREADY_HELD};
      }
      graph.held[event.u] = event.v;
      graph.held[event.v] = event.u;
      return {};
    case EventKind::release_pair: {
      if (event.u == event.v) return {v1::Error::SELF_LOOP};
      if (!alive(event.u) || !alive(event.v)) return {v1::Error::UNKNOWN_VERTEX};
      const auto hold = graph.held.find(event.u);
      if (hold == graph.held.end() || hold->second != event.v) return {v1::Error::NOT_HELD};
      release(graph, event.u);
      return {};
    }
    case EventKind::remove_vertex: {
      if (graph.alive.erase(event.u) == 0) return {v1::Error::UNKNOWN_VERTEX};
      release(graph, event.u);  // a departure ends its hold
      std::erase_if(graph.edges, [&event](const auto& edge) {
        return edge.first.first == event.u || edge.first.second == event.u;
      });
      return {};
    }
  }
  return {v1::Error::MALFORMED_MESSAGE};
}

void BatchLimits::after_event(std::size_t index, const ModelGraph& graph,
                              const WindowCount& count) {
  const bool vertices_above = graph.alive.size() > limits_.max_vertices;
  if (vertices_above && !vertices_above_) vertices_crossed_ = index;
  vertices_above_ = vertices_above;
  const std::size_t edges = count.base_edges + count.insertions - count.unsets;
  const bool edges_above = edges > limits_.max_edges;
  if (edges_above && !edges_above_) edges_crossed_ = index;
  edges_above_ = edges_above;
}

std::optional<std::size_t> BatchLimits::refused_at() const {
  if (vertices_above_ && edges_above_) return std::min(vertices_crossed_, edges_crossed_);
  if (vertices_above_) return vertices_crossed_;
  if (edges_above_) return edges_crossed_;
  return std::nullopt;
}

Weight largest_weight(Mode mode, std::size_t max_vertices) {
  const Weight pairs = static_cast<Weight>(max_vertices / 2);
  const Weight exact = Weight{1} << 52;
  if (mode == Mode::max_weight) return std::min(exact, (Weight{1} << 61) / pairs);
  // The offset pairs x 2W + W + 1 plus W must stay within 2^52.
  return (exact - 1) / (2 * pairs + 2);
}

std::optional<Optimum> brute_force_optimum(const ModelGraph& graph, Mode mode,
                                           std::size_t max_vertices) {
  if (graph.alive.size() > max_vertices) return std::nullopt;
  // Held pairs are matched whatever they cost; the rest is optimised on the other vertices.
  Optimum held;
  std::vector<VertexKey> keys;
  for (const VertexKey key : graph.alive) {
    const auto hold = graph.held.find(key);
    if (hold == graph.held.end()) {
      keys.push_back(key);
    } else if (key < hold->second) {
      ++held.pairs;
      held.weight += graph.edges.at(edge_key(key, hold->second));
    }
  }
  const std::size_t n = keys.size();
  const auto index = [&keys](VertexKey key) {
    return static_cast<std::size_t>(std::lower_bound(keys.begin(), keys.end(), key) - keys.begin());
  };
  // weight[i][j] for the edge {i, j}; `present` tells an edge of weight 0 from no edge.
  std::vector<std::vector<std::optional<Weight>>> weight(n, std::vector<std::optional<Weight>>(n));
  for (const auto& [key, w] : graph.edges) {
    if (graph.held.count(key.first) != 0 || graph.held.count(key.second) != 0) continue;
    const std::size_t i = index(key.first);
    const std::size_t j = index(key.second);
    weight[i][j] = weight[j][i] = w;
  }
  const bool cardinality_first = mode != Mode::max_weight;
  const auto better = [cardinality_first](const Optimum& a, const Optimum& b) {
    if (cardinality_first && a.pairs != b.pairs) return a.pairs > b.pairs;
    return a.weight > b.weight;
  };
  // best[mask]: the optimum on the vertices in mask. Its lowest vertex is either left exposed
  // or matched to another vertex of the mask.
  std::vector<Optimum> best(std::size_t{1} << n);
  for (std::size_t mask = 1; mask < best.size(); ++mask) {
    const std::size_t i = static_cast<std::size_t>(__builtin_ctzll(mask));
    const std::size_t rest = mask & (mask - 1);
    Optimum top = best[rest];
    for (std::size_t j = i + 1; j < n; ++j) {
      if (!(rest >> j & 1) || !weight[i][j]) continue;
      const Optimum& inner = best[rest & ~(std::size_t{1} << j)];
      const Optimum candidate{inner.pairs + 1, inner.weight + *weight[i][j]};
      if (better(candidate, top)) top = candidate;
    }
    best[mask] = top;
  }
  return Optimum{best.back().pairs + held.pairs, best.back().weight + held.weight};
}

}  // namespace yoke::fuzz
