#include "duplicate_edges.h"

#include <algorithm>
#include <cstdint>
#include <vector>

namespace yoke::formats {

std::optional<DuplicateEdge> find_first_duplicate(std::size_t vertex_count,
                                                  std::span<const Edge> edges) {
  const auto low = [&](std::size_t e) { return std::min(edges[e].a, edges[e].b); };
  const auto high = [&](std::size_t e) { return std::max(edges[e].a, edges[e].b); };

  // Bucket the edge indices by smaller endpoint; a stable counting sort keeps each bucket in
  // file order, so the first edge seen with a given larger endpoint is its first occurrence.
  // After the placement loop, bucket_end[u] is where bucket u ends.
  std::vector<EdgeIndex> bucket_end(vertex_count + 1, 0);
  for (std::size_t e = 0; e < edges.size(); ++e) ++bucket_end[low(e) + 1];
  for (std::size_t u = 0; u < vertex_count; ++u) bucket_end[u + 1] += bucket_end[u];
  std::vector<EdgeIndex> by_low(edges.size());
  for (std::size_t e = 0; e < edges.size(); ++e) {
    by_low[bucket_end[low(e)]++] = static_cast<EdgeIndex>(e);
  }

  // seen[v] is an edge {u', v} with u' the smaller end; it belongs to the current bucket only
  // if u' == u, so the array never needs clearing between buckets.
  std::vector<EdgeIndex> seen(vertex_count, kNoEdge);
  std::optional<DuplicateEdge> earliest;
  std::size_t begin = 0;
  for (std::size_t u = 0; u < vertex_count; ++u) {
    const std::size_t end = bucket_end[u];
    for (std::size_t i = begin; i < end; ++i) {
      const EdgeIndex e = by_low[i];
      const Vertex v = high(e);
      const EdgeIndex earlier = seen[v];
      if (earlier != kNoEdge && low(earlier) == u) {
        if (!earliest || e < earliest->repeat) earliest = DuplicateEdge{earlier, e};
      } else {
        seen[v] = e;
      }
    }
    begin = end;
  }
  return earliest;
}

}  // namespace yoke::formats
