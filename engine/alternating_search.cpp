#include "alternating_search.h"

#include <algorithm>

namespace yoke {

AlternatingSearch::AlternatingSearch(const Graph& graph, Weight weight_offset, MatchingState& state)
    : graph_(graph),
      weight_offset_(weight_offset),
      state_(state),
      forest_(state.forest),
      mate_(state.mate),
      dual2_(state.dual2),
      vertex_stamp_(graph.vertex_count(), 0),
      vertex_sign_(graph.vertex_count(), 0),
      vertex_since_(graph.vertex_count(), 0),
      node_stamp_(2 * graph.vertex_count(), 0),
      node_label_(2 * graph.vertex_count(), kFree),
      node_since_(2 * graph.vertex_count(), 0),
      tree_outer_(2 * graph.vertex_count(), kNoVertex),
      tree_inner_(2 * graph.vertex_count(), kNoVertex),
      mark_(2 * graph.vertex_count(), 0) {}

Weight AlternatingSearch::vertex_dual(Vertex v) const {
  if (vertex_stamp_[v] != stamp_) return dual2_[v];
  return dual2_[v] + vertex_sign_[v] * (delta_ - vertex_since_[v]);
}

Weight AlternatingSearch::blossom_dual(NodeId b) const {
  const Label label = label_of(b);
  if (label == kFree || forest_.parent(b) != kNoNode) return forest_.dual2(b);
  const Weight steps = delta_ - node_since_[b];
  return forest_.dual2(b) + (label == kEven ? 2 * steps : -2 * steps);
}

void AlternatingSearch::set_vertex_sign(Vertex v, int sign) {
  const Weight current = vertex_dual(v);
  if (vertex_stamp_[v] != stamp_) {
    vertex_stamp_[v] = stamp_;
    touched_vertices_.push_back(v);
  }
  dual2_[v] = current;
  vertex_sign_[v] = static_cast<std::int8_t>(sign);
  vertex_since_[v] = delta_;
}

void AlternatingSearch::settle_blossom_dual(NodeId b) {
  if (forest_.is_vertex(b)) return;
  forest_.set_dual2(b, blossom_dual(b));
  node_since_[b] = delta_;
}

void AlternatingSearch::settle_all() {
  for (Vertex v : touched_vertices_) dual2_[v] = vertex_dual(v);
  for (NodeId node : touched_nodes_) {
    if (forest_.is_live_blossom(node) && forest_.parent(node) == kNoNode) settle_blossom_dual(node);
  }
  touched_vertices_.clear();
  touched_nodes_.clear();
}

void AlternatingSearch::label_node(NodeId node, Label label, Vertex outer, Vertex inner) {
  settle_blossom_dual(node);
  if (node_stamp_[node] != stamp_) {
    node_stamp_[node] = stamp_;
    touched_nodes_.push_back(node);
  }
  node_label_[node] = label;
  node_since_[node] = delta_;
  tree_outer_[node] = outer;
  tree_inner_[node] = inner;
}

void AlternatingSearch::label_even(NodeId node, Vertex via_odd, Vertex base) {
  label_node(node, kEven, via_odd, base);
  forest_.for_each_vertex(node, [&](Vertex v) { make_even(v); });
}

void AlternatingSearch::make_even(Vertex v) {
  set_vertex_sign(v, -1);
  even_vertices_.push(delta_ + dual2_[v], v);
  scan_queue_.push_back(v);
}

void AlternatingSearch::label_odd(NodeId node, Vertex via_even, Vertex entry) {
  label_node(node, kOdd, via_even, entry);
  forest_.for_each_vertex(node, [&](Vertex v) { set_vertex_sign(v, +1); });
  if (!forest_.is_vertex(node)) odd_blossoms_.push(delta_ + forest_.dual2(node) / 2, node);
}

void AlternatingSearch::scan(Vertex v) {
  const Weight dual_v = vertex_dual(v);
  const NodeId top_v = forest_.top(v);
  for (const Incidence& inc : graph_.incident(v)) {
    const Weight w = weight(inc.edge);
    if (w <= 0) continue;  // never worth taking; its slack stays >= 0 as all duals are >= 0
    const NodeId top_x = forest_.top(inc.other);
    if (top_x == top_v) continue;
    const Label label = label_of(top_x);
    if (label == kOdd) continue;  // slack is constant while one end is even and the other odd
    const Weight slack = dual_v + vertex_dual(inc.other) - 2 * w;
    if (label == kEven) {
      even_edges_.push(delta_ + slack / 2, inc.edge);
    } else {
      free_edges_.push(delta_ + slack, inc.edge);
    }
  }
}

void AlternatingSearch::push_edges_to_even(NodeId node) {
  forest_.for_each_vertex(node, [&](Vertex u) {
    const Weight dual_u = vertex_dual(u);
    for (const Incidence& inc : graph_.incident(u)) {
      const Weight w = weight(inc.edge);
      if (w <= 0 || label_of(forest_.top(inc.other)) != kEven) continue;
      free_edges_.push(delta_ + dual_u + vertex_dual(inc.other) - 2 * w, inc.edge);
    }
  });
}

bool AlternatingSearch::top_free_edge(Weight& key) {
  while (!free_edges_.empty()) {
    const MinHeap::Entry entry = free_edges_.top();
    const Edge& e = graph_.edge(entry.id);
    const NodeId top_a = forest_.top(e.a);
    const NodeId top_b = forest_.top(e.b);
    const Label label_a = label_of(top_a);
    const Label label_b = label_of(top_b);
    const bool even_free = (label_a == kEven && label_b == kFree) || (label_a == kFree && label_b == kEven);
    if (top_a == top_b || !even_free) {
      free_edges_.pop();
      continue;
    }
    // The free end may have been odd for a while (inside a blossom since expanded), so its dual
    // may have risen: recompute and requeue when the key is out of date.
    const Weight due = delta_ + vertex_dual(e.a) + vertex_dual(e.b) - 2 * weight(entry.id);
    if (due != entry.key) {
      free_edges_.pop();
      free_edges_.push(due, entry.id);
      continue;
    }
    key = entry.key;
    return true;
  }
  return false;
}

bool AlternatingSearch::top_even_edge(Weight& key) {
  while (!even_edges_.empty()) {
    const MinHeap::Entry entry = even_edges_.top();
    const Edge& e = graph_.edge(entry.id);
    const NodeId top_a = forest_.top(e.a);
    const NodeId top_b = forest_.top(e.b);
    if (top_a == top_b || label_of(top_a) != kEven || label_of(top_b) != kEven) {
      even_edges_.pop();
      continue;
    }
    key = entry.key;
    return true;
  }
  return false;
}

bool AlternatingSearch::top_odd_blossom(Weight& key) {
  while (!odd_blossoms_.empty()) {
    const MinHeap::Entry entry = odd_blossoms_.top();
    const NodeId b = entry.id;
    if (!forest_.is_live_blossom(b) || forest_.parent(b) != kNoNode || label_of(b) != kOdd ||
        entry.key != node_since_[b] + forest_.dual2(b) / 2) {
      odd_blossoms_.pop();
      continue;
    }
    key = entry.key;
    return true;
  }
  return false;
}

bool AlternatingSearch::run(Vertex root) {
  if (++stamp_ == 0) {  // wrapped: old stamps could collide, so clear them once
    std::fill(vertex_stamp_.begin(), vertex_stamp_.end(), 0);
    std::fill(node_stamp_.begin(), node_stamp_.end(), 0);
    stamp_ = 1;
  }
  delta_ = 0;
  even_vertices_.clear();
  free_edges_.clear();
  even_edges_.clear();
  odd_blossoms_.clear();
  scan_queue_.clear();
  ++stats_.searches;

  const NodeId root_node = forest_.top(root);
  label_even(root_node, kNoVertex, forest_.base(root_node));

  bool augmented = false;
  for (;;) {
    while (!scan_queue_.empty()) {
      const Vertex v = scan_queue_.back();
      scan_queue_.pop_back();
      scan(v);
    }
    Weight free_key = 0, even_key = 0, odd_key = 0;
    const bool has_free = top_free_edge(free_key);
    const bool has_even = top_even_edge(even_key);
    const bool has_odd = top_odd_blossom(odd_key);
    Weight next = even_vertices_.top().key;  // the root is even, so this heap is never empty
    if (has_free) next = std::min(next, free_key);
    if (has_even) next = std::min(next, even_key);
    if (has_odd) next = std::min(next, odd_key);
    if (next != delta_) ++stats_.dual_steps;
    delta_ = next;

    if (has_free && free_key == next) {
      const EdgeIndex e = free_edges_.top().id;
      free_edges_.pop();
      if (grow_along(e)) {
        augmented = true;
        break;
      }
    } else if (has_even && even_key == next) {
      const EdgeIndex e = even_edges_.top().id;
      even_edges_.pop();
      shrink(graph_.edge(e).a, graph_.edge(e).b);
    } else if (has_odd && odd_key == next) {
      const NodeId b = odd_blossoms_.top().id;
      odd_blossoms_.pop();
      expand_odd(b);
    } else {
      // An even vertex's dual reached zero: it may stay exposed, so shift the matching along
      // the even path from the root to it.
      flip_path_to_root(even_vertices_.top().id, kNoVertex);
      break;
    }
  }
  settle_all();
  return augmented;
}

bool AlternatingSearch::grow_along(EdgeIndex e) {
  const Edge& edge = graph_.edge(e);
  const bool a_even = label_of(forest_.top(edge.a)) == kEven;
  const Vertex even_end = a_even ? edge.a : edge.b;
  const Vertex free_end = a_even ? edge.b : edge.a;
  const NodeId node = forest_.top(free_end);
  const Vertex base = forest_.base(node);
  if (mate_[base] == kNoVertex) {
    if (!forest_.is_vertex(node)) forest_.make_base(node, free_end, mate_);
    mate_[free_end] = even_end;
    flip_path_to_root(even_end, free_end);
    ++stats_.augmentations;
    return true;
  }
  label_odd(node, even_end, free_end);
  const Vertex partner = mate_[base];
  label_even(forest_.top(partner), base, partner);
  return false;
}

void AlternatingSearch::flip_path_to_root(Vertex v, Vertex partner) {
  for (;;) {
    const NodeId even_node = forest_.top(v);
    const Vertex odd_vertex = tree_outer_[even_node];
    if (!forest_.is_vertex(even_node)) forest_.make_base(even_node, v, mate_);
    mate_[v] = partner;
    if (odd_vertex == kNoVertex) return;
    const NodeId odd_node = forest_.top(odd_vertex);
    const Vertex next_even = tree_outer_[odd_node];
    const Vertex entry = tree_inner_[odd_node];
    if (!forest_.is_vertex(odd_node)) forest_.make_base(odd_node, entry, mate_);
    mate_[entry] = next_even;
    v = next_even;
    partner = entry;
  }
}

void AlternatingSearch::shrink(Vertex v, Vertex w) {
  const NodeId top_v = forest_.top(v);
  const NodeId top_w = forest_.top(w);
  auto even_parent = [&](NodeId node) {
    return forest_.top(tree_outer_[forest_.top(tree_outer_[node])]);
  };
  // Climb from both ends in turn; the first even node reached twice is where the paths meet.
  if (++mark_stamp_ == 0) {
    std::fill(mark_.begin(), mark_.end(), 0);
    mark_stamp_ = 1;
  }
  NodeId x = top_v, y = top_w, meet = kNoNode;
  mark_[x] = mark_[y] = mark_stamp_;
  while (meet == kNoNode) {
    if (tree_outer_[x] != kNoVertex) {
      x = even_parent(x);
      if (mark_[x] == mark_stamp_) meet = x;
      mark_[x] = mark_stamp_;
    }
    if (meet == kNoNode && tree_outer_[y] != kNoVertex) {
      y = even_parent(y);
      if (mark_[y] == mark_stamp_) meet = y;
      mark_[y] = mark_stamp_;
    }
  }

  // Cycle order: the meeting node, down the tree path to top_v, across {v, w}, up to the meeting
  // node again. Each tree step is the edge (tree_inner_, tree_outer_) of the lower node.
  side_nodes_.clear();
  side_edges_.clear();
  for (NodeId node = top_v; node != meet; node = forest_.top(tree_outer_[node])) {
    side_nodes_.push_back(node);
    side_edges_.push_back({tree_inner_[node], tree_outer_[node]});
  }
  cycle_nodes_.assign(1, meet);
  cycle_edges_.clear();
  for (std::size_t i = side_nodes_.size(); i-- > 0;) {
    cycle_edges_.push_back({side_edges_[i].to, side_edges_[i].from});
    cycle_nodes_.push_back(side_nodes_[i]);
  }
  cycle_edges_.push_back({v, w});
  for (NodeId node = top_w; node != meet; node = forest_.top(tree_outer_[node])) {
    cycle_nodes_.push_back(node);
    cycle_edges_.push_back({tree_inner_[node], tree_outer_[node]});
  }

  const Vertex outer = tree_outer_[meet];
  const Vertex inner = tree_inner_[meet];
  for (NodeId node : cycle_nodes_) {
    const Label was = label_of(node);
    settle_blossom_dual(node);  // frozen from now on: the node is no longer top level
    node_label_[node] = kFree;
    if (was == kOdd) forest_.for_each_vertex(node, [&](Vertex u) { make_even(u); });
  }
  const NodeId b = forest_.make_blossom(cycle_nodes_, cycle_edges_);
  label_node(b, kEven, outer, inner);
  ++stats_.blossoms_formed;
}

void AlternatingSearch::expand_odd(NodeId b) {
  ++stats_.blossoms_expanded;
  const Vertex reached_from = tree_outer_[b];
  const Vertex reached_at = tree_inner_[b];
  cycle_nodes_ = forest_.children(b);
  cycle_edges_ = forest_.cycle_edges(b);
  node_label_[b] = kFree;
  forest_.dissolve(b);

  const std::size_t k = cycle_nodes_.size();
  const NodeId entry = forest_.top(reached_at);
  const std::size_t i = static_cast<std::size_t>(
      std::find(cycle_nodes_.begin(), cycle_nodes_.end(), entry) - cycle_nodes_.begin());
  // Relabel the even-length side of the cycle from the entry child to the base child as a
  // piece of the tree (odd, even, ..., odd); the children on the other side leave the tree.
  label_odd(entry, reached_from, reached_at);
  std::size_t free_first, free_last;  // the children leaving the tree, [first, last)
  if (i % 2 == 1) {
    for (std::size_t j = i; j != k; j += 2) {
      const CycleEdge matched = cycle_edges_[j];
      const CycleEdge next = cycle_edges_[j + 1];
      label_even(cycle_nodes_[j + 1], matched.from, matched.to);
      label_odd(cycle_nodes_[(j + 2) % k], next.from, next.to);
    }
    free_first = 1;
    free_last = i;
  } else {
    for (std::size_t j = i; j != 0; j -= 2) {
      const CycleEdge matched = cycle_edges_[j - 1];
      const CycleEdge next = cycle_edges_[j - 2];
      label_even(cycle_nodes_[j - 1], matched.to, matched.from);
      label_odd(cycle_nodes_[j - 2], next.to, next.from);
    }
    free_first = i + 1;
    free_last = k;
  }
  for (std::size_t j = free_first; j < free_last; ++j) {
    const NodeId child = cycle_nodes_[j];
    label_node(child, kFree, kNoVertex, kNoVertex);
    forest_.for_each_vertex(child, [&](Vertex u) { set_vertex_sign(u, 0); });
  }
  for (std::size_t j = free_first; j < free_last; ++j) push_edges_to_even(cycle_nodes_[j]);
}

}  // namespace yoke
