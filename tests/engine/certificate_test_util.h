// Test helpers for the certificate checker: exhaustive enumeration of the optimum of a tiny
// graph, and the weight of a given matching. Independent of the engine's solver and checker.
#pragma once

#include <algorithm>
#include <cstdint>
#include <limits>
#include <optional>
#include <vector>

#include "yoke/graph.h"
#include "yoke/types.h"

namespace yoke::certtest {

// The best total of (w + offset) over all matchings of `graph` (over perfect matchings in
// perfect mode; nullopt when there is none), by exhaustive enumeration: for each vertex set S,
// the lowest vertex of S is either left exposed or matched to each of its neighbours in S in
// turn. Every matching is reached. O(2^n * n); meant for n <= ~16.
inline std::optional<Weight> brute_force_optimum(const Graph& graph, Mode mode, Weight offset) {
  const std::size_t n = graph.vertex_count();
  constexpr Weight kNone = std::numeric_limits<Weight>::min();
  std::vector<Weight> weight(n * n, kNone);
  for (const Edge& e : graph.edges()) {
    Weight& slot = weight[e.a * n + e.b];
    slot = std::max(slot, e.w + offset);
    weight[e.b * n + e.a] = slot;
  }
  const std::uint32_t all = (std::uint32_t{1} << n) - 1;
  std::vector<Weight> best(all + 1, kNone);
  best[0] = 0;
  for (std::uint32_t set = 1; set <= all; ++set) {
    const int v = __builtin_ctz(set);
    const std::uint32_t rest = set & (set - 1);
    if (mode != Mode::perfect) best[set] = best[rest];
    for (std::uint32_t others = rest; others != 0; others &= others - 1) {
      const int u = __builtin_ctz(others);
      const Weight w = weight[static_cast<std::size_t>(v) * n + static_cast<std::size_t>(u)];
      const Weight below = best[rest & ~(std::uint32_t{1} << u)];
      if (w == kNone || below == kNone) continue;
      best[set] = std::max(best[set], w + below);
    }
  }
  if (best[all] == kNone) return std::nullopt;
  return best[all];
}

// The total of (w + offset) over the matched pairs of `mate` (each pair once). Preconditions:
// mate is symmetric and every pair is an edge; with parallel edges the heaviest counts.
inline Weight matching_weight(const Graph& graph, const std::vector<Vertex>& mate, Weight offset) {
  const std::size_t n = graph.vertex_count();
  std::vector<Weight> pair_weight(n, std::numeric_limits<Weight>::min());
  for (const Edge& e : graph.edges()) {
    if (mate[e.a] == e.b)
      pair_weight[std::min(e.a, e.b)] = std::max(pair_weight[std::min(e.a, e.b)], e.w);
  }
  Weight total = 0;
  for (Vertex v = 0; v < n; ++v) {
    if (mate[v] != kNoVertex && v < mate[v]) total += pair_weight[v] + offset;
  }
  return total;
}

}  // namespace yoke::certtest
