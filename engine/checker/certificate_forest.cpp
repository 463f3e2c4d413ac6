#include "certificate_forest.h"

namespace yoke::certcheck {

namespace {

// Links every child to its blossom; fails on an id out of range or a second parent.
std::string link_parents(const Certificate& cert, std::size_t n, std::vector<NodeId>& parent) {
  const std::size_t node_count = parent.size();
  for (std::size_t k = 0; k < cert.blossoms.size(); ++k) {
    const auto self = static_cast<NodeId>(n + k);
    for (const NodeId child : cert.blossoms[k].children) {
      if (child >= node_count) {
        return "blossom " + std::to_string(k) + " lists child " + std::to_string(child) +
               ", which is no node (vertices are 0.." + std::to_string(n) + "-1, blossoms " +
               std::to_string(n) + ".." + std::to_string(node_count) + "-1)";
      }
      if (parent[child] != kNoNode) {
        return node_name(child, n) + " has two parents: " + node_name(parent[child], n) + " and " +
               node_name(self, n);
      }
      parent[child] = self;
    }
  }
  return "";
}

// A node left out of the preorder hangs below a cycle of parent links: walk up to the cycle
// and name a node on it.
std::string describe_cycle(const ForestLayout& forest, const std::vector<char>& reached) {
  const std::size_t node_count = forest.node_count();
  NodeId start = 0;
  while (reached[start]) ++start;
  std::vector<char> on_walk(node_count, 0);
  NodeId node = start;
  while (!on_walk[node]) {
    on_walk[node] = 1;
    node = forest.parent[node];  // never kNoNode: every root was reached
  }
  return "the blossom forest has a cycle: " + node_name(node, forest.vertex_count) +
         " is its own ancestor";
}

// Preorder from the roots with an explicit stack. Returns false when some node is not
// reachable from a root, i.e. the parent links hold a cycle.
bool lay_out_preorder(const Certificate& cert, ForestLayout& forest, std::vector<char>& reached) {
  const std::size_t n = forest.vertex_count;
  const std::size_t node_count = forest.node_count();
  forest.preorder.reserve(node_count);
  std::vector<NodeId> stack;
  for (std::size_t r = node_count; r-- > 0;) {
    if (forest.parent[r] == kNoNode) stack.push_back(static_cast<NodeId>(r));
  }
  while (!stack.empty()) {
    const NodeId node = stack.back();
    stack.pop_back();
    reached[node] = 1;
    forest.position[node] = static_cast<std::uint32_t>(forest.preorder.size());
    forest.preorder.push_back(node);
    if (node < n) continue;
    const auto& children = cert.blossoms[node - n].children;
    for (auto it = children.rbegin(); it != children.rend(); ++it) stack.push_back(*it);
  }
  return forest.preorder.size() == node_count;
}

}  // namespace

std::string node_name(NodeId node, std::size_t vertex_count) {
  if (node < vertex_count) return "vertex " + std::to_string(node);
  return "blossom " + std::to_string(node - vertex_count) + " (node " + std::to_string(node) + ")";
}

std::string build_forest_layout(const Certificate& cert, std::size_t vertex_count,
                                ForestLayout& forest) {
  const std::size_t n = vertex_count;
  const std::size_t node_count = n + cert.blossoms.size();
  if (node_count >= kNoNode) {
    return std::to_string(n) + " vertices and " + std::to_string(cert.blossoms.size()) +
           " blossoms exceed the 32-bit node ids";
  }
  forest = ForestLayout{};
  forest.vertex_count = n;
  forest.parent.assign(node_count, kNoNode);
  if (std::string failure = link_parents(cert, n, forest.parent); !failure.empty()) {
    return failure;
  }

  forest.position.assign(node_count, 0);
  std::vector<char> reached(node_count, 0);
  if (!lay_out_preorder(cert, forest, reached)) return describe_cycle(forest, reached);
  reached = {};

  // Bottom-up sizes: a node's subtree is complete once every later node in preorder is added.
  forest.subtree_nodes.assign(node_count, 1);
  forest.subtree_vertices.assign(node_count, 0);
  for (std::size_t v = 0; v < n; ++v) forest.subtree_vertices[v] = 1;
  for (std::size_t i = node_count; i-- > 0;) {
    const NodeId node = forest.preorder[i];
    const NodeId up = forest.parent[node];
    if (up == kNoNode) continue;
    forest.subtree_nodes[up] += forest.subtree_nodes[node];
    forest.subtree_vertices[up] += forest.subtree_vertices[node];
  }

  // Top-down sums of 2z: a parent precedes its children in preorder.
  forest.dual2_from_root.assign(node_count, 0);
  for (const NodeId node : forest.preorder) {
    const NodeId up = forest.parent[node];
    const Int128 above = up == kNoNode ? Int128{0} : forest.dual2_from_root[up];
    const Int128 own = node < n ? Int128{0} : Int128{cert.blossoms[node - n].dual2};
    forest.dual2_from_root[node] = above + own;
  }

  for (std::size_t k = 0; k < cert.blossoms.size(); ++k) {
    const auto self = static_cast<NodeId>(n + k);
    const std::uint32_t size = forest.subtree_vertices[self];
    if (size < 3 || size % 2 == 0) {
      return node_name(self, n) + " has size " + std::to_string(size) +
             "; a blossom must hold an odd number of vertices, at least 3";
    }
    const Vertex base = cert.blossoms[k].base;
    if (base == kNoVertex) continue;
    if (base >= n) {
      return node_name(self, n) + " names base " + std::to_string(base) + ", which is not a vertex";
    }
    if (!forest.contains(self, base)) {
      return node_name(self, n) + " names base vertex " + std::to_string(base) +
             ", which is not inside it";
    }
  }
  return "";
}

}  // namespace yoke::certcheck
