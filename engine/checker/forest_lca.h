// Lowest common ancestors of the two ends of every edge in a blossom forest, answered offline
// with Tarjan's method (union-find over the nodes already finished in a preorder walk).
//
// Cost O((nodes + m) * inverse-Ackermann-like), memory O(nodes + m), no recursion: the walk
// replays the forest's preorder with an explicit stack of open ancestors.
#pragma once

#include <span>
#include <vector>

#include "certificate_forest.h"
#include "yoke/graph.h"

namespace yoke::certcheck {

// For each edge {a, b} (a != b, both < forest.vertex_count) the deepest node whose subtree holds
// both ends, or kNoNode when they lie in different trees. Index i answers edges[i].
std::vector<NodeId> edge_lcas(const ForestLayout& forest, std::span<const Edge> edges);

}  // namespace yoke::certcheck
