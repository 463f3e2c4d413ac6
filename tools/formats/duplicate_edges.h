// Finds a repeated edge ({a, b} given twice, in either orientation) without a hash set of all
// edges: a counting sort of edge indices by smaller endpoint and one marker per vertex.
// Cost O(n + m) time, 4 (2n + m) bytes of temporary memory.
#pragma once

#include <cstddef>
#include <optional>
#include <span>

#include "yoke/graph.h"

namespace yoke::formats {

struct DuplicateEdge {
  std::size_t first;   // index of the edge's first occurrence
  std::size_t repeat;  // index of a later occurrence
};

// The duplicate whose repeat comes earliest in `edges` (so errors follow file order), or
// nullopt. Preconditions: endpoints < vertex_count, edges.size() < kNoEdge.
std::optional<DuplicateEdge> find_first_duplicate(std::size_t vertex_count,
                                                  std::span<const Edge> edges);

}  // namespace yoke::formats
