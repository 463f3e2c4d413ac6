#include "exhaustive_matching.h"

#include <functional>
#include <stdexcept>

namespace yoke::cli::testing {
namespace {

bool better(const Optimum& a, const Optimum& b, Mode mode) {
  if (mode == Mode::max_cardinality && a.pairs != b.pairs) return a.pairs > b.pairs;
  return a.weight > b.weight;
}

}  // namespace

std::optional<Optimum> exhaustive_optimum(std::size_t vertex_count,
                                          const std::vector<Edge>& edges, Mode mode) {
  if (vertex_count > 16) throw std::invalid_argument("exhaustive_optimum: graph too large");
  // weight_of[a][b] for an edge {a, b}, nullopt for a non-edge.
  std::vector<std::vector<std::optional<std::int64_t>>> weight_of(
      vertex_count, std::vector<std::optional<std::int64_t>>(vertex_count));
  for (const Edge& e : edges) weight_of[e.a][e.b] = weight_of[e.b][e.a] = e.w;

  std::vector<bool> decided(vertex_count, false);
  std::optional<Optimum> best;
  Optimum current;
  // Decide the lowest undecided vertex: leave it exposed, or match it to a later neighbour.
  std::function<void()> extend = [&] {
    std::size_t v = 0;
    while (v < vertex_count && decided[v]) ++v;
    if (v == vertex_count) {
      if (!best || better(current, *best, mode)) best = current;
      return;
    }
    decided[v] = true;
    if (mode != Mode::perfect) extend();
    for (std::size_t u = v + 1; u < vertex_count; ++u) {
      if (decided[u] || !weight_of[v][u]) continue;
      decided[u] = true;
      ++current.pairs;
      current.weight += *weight_of[v][u];
      extend();
      current.weight -= *weight_of[v][u];
      --current.pairs;
      decided[u] = false;
    }
    decided[v] = false;
  };
  extend();
  return best;
}

}  // namespace yoke::cli::testing
