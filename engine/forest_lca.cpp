#include "forest_lca.h"

namespace yoke::certcheck {

namespace {

// Edge ids grouped by endpoint (compressed rows), so each vertex sees its queries when the
// walk reaches it.
struct EdgesByVertex {
  std::vector<std::uint32_t> begin;  // vertex v's ids are ids[begin[v] .. begin[v + 1])
  std::vector<EdgeIndex> ids;

  EdgesByVertex(std::size_t n, std::span<const Edge> edges) : begin(n + 1, 0), ids(2 * edges.size()) {
    for (const Edge& e : edges) {
      ++begin[e.a + 1];
      ++begin[e.b + 1];
    }
    for (std::size_t v = 0; v < n; ++v) begin[v + 1] += begin[v];
    std::vector<std::uint32_t> next(begin.begin(), begin.end() - 1);
    for (std::size_t i = 0; i < edges.size(); ++i) {
      ids[next[edges[i].a]++] = static_cast<EdgeIndex>(i);
      ids[next[edges[i].b]++] = static_cast<EdgeIndex>(i);
    }
  }
};

// Follows union-find links to the set's representative, halving the path on the way.
NodeId find(std::vector<NodeId>& link, NodeId node) {
  while (link[node] != node) {
    link[node] = link[link[node]];
    node = link[node];
  }
  return node;
}

}  // namespace

std::vector<NodeId> edge_lcas(const ForestLayout& forest, std::span<const Edge> edges) {
  const std::size_t n = forest.vertex_count;
  const std::size_t node_count = forest.node_count();
  // One virtual root above every tree keeps the open-ancestor stack non-empty; an answer equal
  // to it means "different trees".
  const auto super_root = static_cast<NodeId>(node_count);

  const EdgesByVertex by_vertex(n, edges);
  std::vector<NodeId> answer(edges.size(), kNoNode);

  // Tarjan's invariant: an open node (on the stack) is its own representative; a finished node
  // is linked to its parent. So find(u), for a node u already walked, is u's deepest open
  // ancestor, which is the LCA of u and the node being walked now.
  std::vector<NodeId> link(node_count + 1);
  for (std::size_t i = 0; i <= node_count; ++i) link[i] = static_cast<NodeId>(i);
  std::vector<NodeId> open{super_root};

  for (const NodeId node : forest.preorder) {
    const NodeId up = forest.parent[node] == kNoNode ? super_root : forest.parent[node];
    while (open.back() != up) {
      const NodeId done = open.back();
      open.pop_back();
      link[done] = open.back();
    }
    open.push_back(node);
    if (node >= n) continue;
    for (std::uint32_t q = by_vertex.begin[node]; q < by_vertex.begin[node + 1]; ++q) {
      const EdgeIndex e = by_vertex.ids[q];
      const Vertex other = edges[e].other(node);
      if (forest.position[other] < forest.position[node]) {
        const NodeId lca = find(link, other);
        answer[e] = lca == super_root ? kNoNode : lca;
      }
    }
  }
  return answer;
}

}  // namespace yoke::certcheck
