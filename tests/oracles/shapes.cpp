#include "shapes.h"

#include <random>
#include <stdexcept>

namespace yoke::oracle {

Graph complete_graph(std::size_t n, Weight w) {
  std::vector<Edge> edges;
  for (Vertex a = 0; a < n; ++a) {
    for (Vertex b = a + 1; b < n; ++b) edges.push_back({a, b, w});
  }
  return Graph::from_edges(n, std::move(edges));
}

Graph cycle_graph(std::size_t n, Weight w) {
  if (n < 3) throw std::invalid_argument("a cycle needs at least 3 vertices");
  std::vector<Edge> edges;
  for (Vertex v = 0; v < n; ++v) edges.push_back({v, static_cast<Vertex>((v + 1) % n), w});
  return Graph::from_edges(n, std::move(edges));
}

Graph path_graph(std::size_t n, Weight w) {
  std::vector<Edge> edges;
  for (Vertex v = 0; v + 1 < n; ++v) edges.push_back({v, v + 1, w});
  return Graph::from_edges(n, std::move(edges));
}

Graph star_graph(const std::vector<Weight>& weights) {
  std::vector<Edge> edges;
  for (std::size_t i = 0; i < weights.size(); ++i) {
    edges.push_back({0, static_cast<Vertex>(i + 1), weights[i]});
  }
  return Graph::from_edges(weights.size() + 1, std::move(edges));
}

Graph petersen_graph(Weight w) {
  std::vector<Edge> edges;
  for (Vertex i = 0; i < 5; ++i) {
    edges.push_back({i, (i + 1) % 5, w});                // outer cycle
    edges.push_back({i + 5, (i + 2) % 5 + 5, w});        // inner pentagram
    edges.push_back({i, i + 5, w});                      // spoke
  }
  return Graph::from_edges(10, std::move(edges));
}

Graph complete_bipartite(std::size_t left, std::size_t right, Weight w) {
  std::vector<Edge> edges;
  for (Vertex a = 0; a < left; ++a) {
    for (std::size_t b = 0; b < right; ++b) edges.push_back({a, static_cast<Vertex>(left + b), w});
  }
  return Graph::from_edges(left + right, std::move(edges));
}

Graph nested_odd_cycles(std::size_t depth, std::size_t arms, Weight base, Weight step) {
  if (arms < 3 || arms % 2 == 0) throw std::invalid_argument("arms must be odd and >= 3");
  // Built bottom-up without recursion: level d is `arms` copies of level d-1.
  std::size_t size = 1;
  std::vector<Edge> edges;
  for (std::size_t level = 1; level <= depth; ++level) {
    const Weight w = base + static_cast<Weight>(depth - level) * step;
    std::vector<Edge> next;
    for (std::size_t copy = 0; copy < arms; ++copy) {
      const auto shift = static_cast<Vertex>(copy * size);
      for (const Edge& e : edges) next.push_back({e.a + shift, e.b + shift, e.w});
    }
    for (std::size_t copy = 0; copy < arms; ++copy) {
      const auto last = static_cast<Vertex>(copy * size + size - 1);
      const auto first = static_cast<Vertex>(((copy + 1) % arms) * size);
      next.push_back({last, first, w});
    }
    edges = std::move(next);
    size *= arms;
  }
  return Graph::from_edges(size, std::move(edges));
}

Graph odd_cycle_chain(std::size_t count, std::size_t length, Weight min_w, Weight max_w,
                      std::uint64_t seed) {
  if (length < 3 || length % 2 == 0) throw std::invalid_argument("length must be odd, >= 3");
  std::mt19937_64 rng(seed);
  std::uniform_int_distribution<Weight> weight(min_w, max_w);
  std::vector<Edge> edges;
  for (std::size_t k = 0; k < count; ++k) {
    const auto first = static_cast<Vertex>(k * length);
    for (std::size_t i = 0; i < length; ++i) {
      edges.push_back({static_cast<Vertex>(first + i),
                       static_cast<Vertex>(first + (i + 1) % length), weight(rng)});
    }
    // Joined at varying positions so that bases do not line up.
    if (k + 1 < count) {
      const auto from = static_cast<Vertex>(first + rng() % length);
      edges.push_back({from, static_cast<Vertex>(first + length + rng() % length), weight(rng)});
    }
  }
  return Graph::from_edges(count * length, std::move(edges));
}

Graph with_weights(const Graph& graph, const std::vector<Weight>& weights) {
  if (weights.size() != graph.edge_count()) throw std::invalid_argument("one weight per edge");
  std::vector<Edge> edges = graph.edges();
  for (std::size_t k = 0; k < edges.size(); ++k) edges[k].w = weights[k];
  return Graph::from_edges(graph.vertex_count(), std::move(edges));
}

Graph with_uniform_weight(const Graph& graph, Weight w) {
  return with_weights(graph, std::vector<Weight>(graph.edge_count(), w));
}

Graph with_isolated(const Graph& graph, std::size_t extra) {
  return Graph::from_edges(graph.vertex_count() + extra, graph.edges());
}

Graph with_stem(const Graph& graph, Vertex to, std::size_t length, Weight w) {
  std::vector<Edge> edges = graph.edges();
  Vertex previous = to;
  for (std::size_t i = 0; i < length; ++i) {
    const auto next = static_cast<Vertex>(graph.vertex_count() + i);
    edges.push_back({previous, next, w});
    previous = next;
  }
  return Graph::from_edges(graph.vertex_count() + length, std::move(edges));
}

}  // namespace yoke::oracle
