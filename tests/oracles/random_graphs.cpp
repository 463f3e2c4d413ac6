#include "random_graphs.h"

#include <algorithm>
#include <random>
#include <sstream>
#include <vector>

namespace yoke::oracle {

std::string RandomGraphSpec::describe() const {
  std::ostringstream out;
  out << "n" << vertices << "_p" << static_cast<int>(edge_probability * 100) << "_w" << min_w
      << "to" << max_w << "_iso" << isolated;
  return out.str();
}

Graph random_graph(const RandomGraphSpec& spec, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::vector<Vertex> order(spec.vertices);
  for (std::size_t v = 0; v < order.size(); ++v) order[v] = static_cast<Vertex>(v);
  std::shuffle(order.begin(), order.end(), rng);
  std::vector<bool> isolated(spec.vertices, false);
  for (std::size_t k = 0; k < std::min(spec.isolated, order.size()); ++k) isolated[order[k]] = true;

  std::bernoulli_distribution take(spec.edge_probability);
  std::uniform_int_distribution<Weight> weight(spec.min_w, spec.max_w);
  std::vector<Edge> edges;
  for (Vertex a = 0; a < spec.vertices; ++a) {
    for (Vertex b = a + 1; b < spec.vertices; ++b) {
      if (isolated[a] || isolated[b] || !take(rng)) continue;
      // Both orientations occur, so no solver can rely on a < b.
      const Weight w = weight(rng);
      edges.push_back(rng() & 1U ? Edge{a, b, w} : Edge{b, a, w});
    }
  }
  std::shuffle(edges.begin(), edges.end(), rng);
  return Graph::from_edges(spec.vertices, std::move(edges));
}

std::vector<RandomGraphSpec> small_random_specs(std::size_t max_vertices) {
  struct Range {
    Weight lo, hi;
  };
  // Mixed sign, all zero, all equal (ties everywhere), all negative, near-ties, wide.
  const Range ranges[] = {{-3, 3}, {0, 0}, {4, 4}, {-6, -1}, {1, 2}, {-1000, 1000}};
  const double densities[] = {0.25, 0.6, 1.0};
  std::vector<RandomGraphSpec> specs;
  for (std::size_t n = 1; n <= max_vertices; ++n) {
    for (double p : densities) {
      for (const Range& r : ranges) {
        for (std::size_t isolated : {std::size_t{0}, 1 + n % 2}) {
          if (isolated >= n) continue;
          specs.push_back({n, p, r.lo, r.hi, isolated});
        }
      }
    }
  }
  return specs;
}

Graph disjoint_union(const Graph& a, const Graph& b) {
  std::vector<Edge> edges = a.edges();
  const auto shift = static_cast<Vertex>(a.vertex_count());
  for (const Edge& e : b.edges()) edges.push_back({e.a + shift, e.b + shift, e.w});
  return Graph::from_edges(a.vertex_count() + b.vertex_count(), std::move(edges));
}

}  // namespace yoke::oracle
