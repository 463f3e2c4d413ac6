#include "yoke/graph.h"

#include <algorithm>
#include <string>
#include <utility>
#include <vector>

#include "yoke/util/dcheck.h"

namespace yoke {

namespace {

// For the precondition check only (O(m log m), never evaluated in Release, where it is unused).
[[maybe_unused]] bool has_no_duplicate_edge(const std::vector<Edge>& edges) {
  std::vector<std::pair<Vertex, Vertex>> ends;
  ends.reserve(edges.size());
  for (const Edge& e : edges) ends.emplace_back(std::min(e.a, e.b), std::max(e.a, e.b));
  std::sort(ends.begin(), ends.end());
  return std::adjacent_find(ends.begin(), ends.end()) == ends.end();
}

}  // namespace

Graph Graph::from_edges(std::size_t vertex_count, std::vector<Edge> edges) {
  YOKE_DCHECK(std::all_of(edges.begin(), edges.end(),
                          [&](const Edge& e) {
                            return e.a < vertex_count && e.b < vertex_count && e.a != e.b;
                          }),
              "Graph::from_edges: an endpoint is out of range or an edge is a self loop");
  YOKE_DCHECK(has_no_duplicate_edge(edges), "Graph::from_edges: two edges join the same ends");
  Graph graph;
  std::vector<std::uint32_t> degree(vertex_count, 0);
  for (const Edge& e : edges) {
    ++degree[e.a];
    ++degree[e.b];
  }
  graph.lists_ = IncidenceLists::with_room(degree);
  for (std::size_t i = 0; i < edges.size(); ++i) {
    const auto index = static_cast<EdgeIndex>(i);
    graph.lists_.push(edges[i].a, {edges[i].b, index, edges[i].w});
    graph.lists_.push(edges[i].b, {edges[i].a, index, edges[i].w});
  }
  graph.edges_ = std::move(edges);
  return graph;
}

Vertex Graph::add_vertex() {
  const auto v = static_cast<Vertex>(lists_.vertex_count());
  lists_.grow_vertices(lists_.vertex_count() + 1);
  return v;
}

void Graph::grow_vertices(std::size_t vertex_count) { lists_.grow_vertices(vertex_count); }

EdgeIndex Graph::add_edge(Vertex a, Vertex b, Weight w) {
  YOKE_DCHECK(a < vertex_count() && b < vertex_count(), "Graph::add_edge: a missing end");
  EdgeIndex index;
  if (free_edges_.empty()) {
    index = static_cast<EdgeIndex>(edges_.size());
    edges_.push_back({a, b, w});
    if (tracking_) positions_.emplace_back();
  } else {
    index = free_edges_.back();
    free_edges_.pop_back();
    edges_[index] = {a, b, w};
  }
  const std::uint32_t in_a = lists_.push(a, {b, index, w});
  const std::uint32_t in_b = lists_.push(b, {a, index, w});
  if (tracking_) positions_[index] = {in_a, in_b};
  return index;
}

void Graph::track_positions() {
  if (tracking_) return;
  tracking_ = true;
  positions_.assign(edges_.size(), {0, 0});
  for (Vertex v = 0; v < vertex_count(); ++v) {
    const std::span<const Incidence> list = lists_.of(v);
    for (std::uint32_t i = 0; i < list.size(); ++i) {
      const EdgeIndex e = list[i].edge;
      (edges_[e].a == v ? positions_[e].in_a : positions_[e].in_b) = i;
    }
  }
}

void Graph::set_weight(EdgeIndex e, Weight w) {
  YOKE_DCHECK(tracking_ && e < edges_.size() && is_live(e),
              "Graph::set_weight: positions are not tracked or the edge is not live");
  Edge& edge = edges_[e];
  edge.w = w;
  lists_.at(edge.a, positions_[e].in_a).w = w;
  lists_.at(edge.b, positions_[e].in_b).w = w;
}

void Graph::remove_incidence(Vertex v, std::uint32_t at) {
  // Swap-remove: the last entry moves into the hole, and its edge learns its new position.
  const Incidence* moved = lists_.remove(v, at);
  if (moved == nullptr) return;
  (edges_[moved->edge].a == v ? positions_[moved->edge].in_a : positions_[moved->edge].in_b) = at;
}

void Graph::remove_edge(EdgeIndex e) {
  YOKE_DCHECK(tracking_ && e < edges_.size() && is_live(e),
              "Graph::remove_edge: positions are not tracked or the edge is not live");
  const Edge edge = edges_[e];
  remove_incidence(edge.a, positions_[e].in_a);
  remove_incidence(edge.b, positions_[e].in_b);
  edges_[e] = {kNoVertex, kNoVertex, 0};
  free_edges_.push_back(e);
}

void Graph::renumber(std::span<const Vertex> new_of_old) {
  const std::size_t n = vertex_count();
  YOKE_DCHECK(new_of_old.size() == n, "Graph::renumber: not one number per vertex");
  std::vector<std::uint32_t> degree(n, 0);
  for (Vertex v = 0; v < n; ++v) degree[new_of_old[v]] = static_cast<std::uint32_t>(incident(v).size());
  IncidenceLists lists = IncidenceLists::with_room(degree);
  for (Vertex v = 0; v < n; ++v) {
    for (const Incidence& inc : incident(v)) lists.push(new_of_old[v], {new_of_old[inc.other], inc.edge, inc.w});
  }
  lists.compact();  // slack for the edges to come
  lists_ = std::move(lists);
  for (Edge& edge : edges_) {
    if (edge.a == kNoVertex) continue;
    edge.a = new_of_old[edge.a];
    edge.b = new_of_old[edge.b];
  }
}

void Graph::save(ByteWriter& out) const {
  out.put<std::uint64_t>(vertex_count());
  out.put<std::uint8_t>(tracking_ ? 1 : 0);
  out.put_vector(edges_);
  out.put_vector(free_edges_);
  std::vector<EdgeIndex> order;
  for (Vertex v = 0; v < vertex_count(); ++v) {
    order.clear();
    for (const Incidence& inc : lists_.of(v)) order.push_back(inc.edge);
    out.put_vector(order);
  }
}

Graph Graph::load(ByteReader& in) {
  const auto n = in.get<std::uint64_t>();
  if (n >= kMaxVertices) ByteReader::fail("too many vertices");
  const bool tracking = in.get<std::uint8_t>() != 0;
  Graph graph;
  graph.edges_ = in.get_vector<Edge>(kMaxEdges);
  graph.free_edges_ = in.get_vector<EdgeIndex>(graph.edges_.size());
  const std::size_t m = graph.edges_.size();
  std::vector<std::uint8_t> seen(m, 0);  // live edges must sit once in each end's list
  for (EdgeIndex e : graph.free_edges_) {
    if (e >= m || graph.edges_[e].a != kNoVertex || seen[e] != 0) ByteReader::fail("a free edge slot is in use");
    seen[e] = 3;
  }
  // Each incidence list takes at least its 8-byte count: a vertex count the bytes cannot hold
  // is damage, and must not first allocate n lists (a few bytes asked for 25 GB; fuzzing found it).
  if (n > in.remaining() / sizeof(std::uint64_t)) ByteReader::fail("too many vertices for its size");
  graph.lists_ = IncidenceLists(n);
  for (Vertex v = 0; v < n; ++v) {
    for (EdgeIndex e : in.get_vector<EdgeIndex>(m)) {
      if (e >= m) ByteReader::fail("an incidence names a missing edge");
      const Edge& edge = graph.edges_[e];
      const int end = edge.a == v ? 1 : edge.b == v ? 2 : 0;
      if (end == 0 || (seen[e] & end) != 0 || edge.a >= n || edge.b >= n || edge.a == edge.b) {
        ByteReader::fail("edge " + std::to_string(e) + " is listed at the wrong vertex");
      }
      seen[e] |= static_cast<std::uint8_t>(end);
      graph.lists_.push(v, {edge.other(v), e, edge.w});
    }
  }
  graph.lists_.compact();  // the lists grew one entry at a time: lay them out in order
  for (EdgeIndex e = 0; e < m; ++e) {
    if (seen[e] != 3) ByteReader::fail("edge " + std::to_string(e) + " is missing from a list");
  }
  if (tracking) graph.track_positions();
  return graph;
}

}  // namespace yoke
