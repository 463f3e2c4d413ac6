#include "forest_lca.h"

namespace yoke::certcheck {

namespace {

// Each edge is asked once, at whichever end the preorder walk reaches second; there the other
// end has been walked already. Grouped by that end in compressed rows, with the earlier end
// stored beside the edge id so that the walk reads the rows sequentially.
struct QueriesByVertex {
  struct Query {
    Vertex earlier;
    EdgeIndex edge;
  };
  std::vector<std::uint32_t> begin;  // vertex v's queries are rows[begin[v] .. begin[v + 1])
  std::vector<Query> rows;

  QueriesByVertex(const ForestLayout& forest, std::span<const Edge> edges)
      : begin(forest.vertex_count + 1, 0), rows(edges.size()) {
    auto later = [&](const Edge& e) {
      return forest.position[e.a] > forest.position[e.b] ? e.a : e.b;
    };
    for (const Edge& e : edges) ++begin[later(e) + 1];
    for (std::size_t v = 0; v < forest.vertex_count; ++v) begin[v + 1] += begin[v];
    std::vector<std::uint32_t> next(begin.begin(), begin.end() - 1);
    for (std::size_t i = 0; i < edges.size(); ++i) {
      const Vertex second = later(edges[i]);
      rows[next[second]++] = {edges[i].other(second), static_cast<EdgeIndex>(i)};
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

  const QueriesByVertex queries(forest, edges);
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
    for (std::uint32_t q = queries.begin[node]; q < queries.begin[node + 1]; ++q) {
      const NodeId lca = find(link, queries.rows[q].earlier);
      answer[queries.rows[q].edge] = lca == super_root ? kNoNode : lca;
    }
  }
  return answer;
}

}  // namespace yoke::certcheck
