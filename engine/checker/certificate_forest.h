// The blossom forest of a certificate, validated and laid out for the checker.
//
// Node ids follow certificate.h: 0 .. n-1 are vertices, n + k is blossoms[k]. The layout gives
// each node its parent, a preorder, subtree sizes and the sum of 2z over the node and its
// blossom ancestors, so that "sum of z over the blossoms holding both ends of an edge" is one
// lookup at the ends' lowest common ancestor. Built in O(n + k + total children), no recursion.
#pragma once

#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/types.h"

namespace yoke::certcheck {

inline constexpr NodeId kNoNode = std::numeric_limits<NodeId>::max();

struct ForestLayout {
  std::size_t vertex_count = 0;                 // nodes below this are vertices
  std::vector<NodeId> parent;                   // per node; kNoNode at a root
  std::vector<NodeId> preorder;                 // every node, each after its parent
  std::vector<std::uint32_t> position;          // index of each node in preorder
  std::vector<std::uint32_t> subtree_nodes;     // nodes in the subtree, the node included
  std::vector<std::uint32_t> subtree_vertices;  // |B| for a blossom, 1 for a vertex
  std::vector<Int128> dual2_from_root;          // 2z summed over the node and its ancestors

  std::size_t node_count() const { return parent.size(); }
  bool is_vertex(NodeId node) const { return node < vertex_count; }
  // True when `node` lies in the subtree of `ancestor` (or is it).
  bool contains(NodeId ancestor, NodeId node) const {
    return position[node] >= position[ancestor] &&
           position[node] - position[ancestor] < subtree_nodes[ancestor];
  }
  // Turns a count per node into a count per subtree: each node's count is added to its
  // parent's, children first (reverse preorder). O(nodes).
  void sum_into_ancestors(std::vector<std::uint32_t>& per_node) const {
    for (std::size_t i = node_count(); i-- > 0;) {
      const NodeId node = preorder[i];
      if (parent[node] != kNoNode) per_node[parent[node]] += per_node[node];
    }
  }
};

// Names a node for a failure message: "vertex 4" or "blossom 2 (node 9)".
std::string node_name(NodeId node, std::size_t vertex_count);

// Checks the shape of cert.blossoms for `vertex_count` vertices: child ids in range, at most
// one parent per node, no cycle, every blossom holding an odd number >= 3 of vertices, a given
// base inside its blossom. Returns the first violation in words, or "" after filling `forest`.
// Blossom duals are summed but not judged here.
std::string build_forest_layout(const Certificate& cert, std::size_t vertex_count,
                                ForestLayout& forest);

}  // namespace yoke::certcheck
