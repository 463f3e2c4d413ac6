#include "solver/alternating_search.h"

#include <algorithm>

#include "yoke/util/dcheck.h"

namespace yoke {

AlternatingSearch::AlternatingSearch(const Graph& graph, Weight weight_offset, MatchingState& state,
                                     bool half_cycles)
    : graph_(graph),
      weight_offset_(weight_offset),
      half_cycles_mode_(half_cycles),
      cycle_next_(half_cycles ? graph.vertex_count() : 0, kNoVertex),
      forest_(state.forest),
      mate_(state.mate),
      dual2_(state.dual2),
      vertex_mark_(graph.vertex_count()),
      node_mark_(2 * graph.vertex_count()),
      node_since_(2 * graph.vertex_count(), 0),
      tree_outer_(2 * graph.vertex_count(), kNoVertex),
      tree_inner_(2 * graph.vertex_count(), kNoVertex),
      tree_of_(2 * graph.vertex_count(), kNoVertex),
      tree_nodes_(graph.vertex_count()),
      root_cause_(graph.vertex_count(), kNoCause),
      mark_(2 * graph.vertex_count(), 0) {}

Weight AlternatingSearch::owed_dual2_slow(Vertex v) const { return forest_.owed_dual2(v); }

void AlternatingSearch::settle_owed_slow(NodeId node) {
  const Weight owed = forest_.pending_dual2(node);
  if (owed == 0) return;
  forest_.for_each_vertex(node, [&](Vertex v) { dual2_[v] += owed; });
  forest_.settle_top(node);  // its vertices' caches still name the dissolved blossoms
  forest_.clear_pending(node);
}

Weight AlternatingSearch::blossom_dual(NodeId b) const {
  const Label label = label_of(b);
  if (label == kFree || forest_.parent(b) != kNoNode) return forest_.dual2(b);
  const Weight steps = delta_ - node_since_[b];
  return forest_.dual2(b) + (label == kEven ? 2 * steps : -2 * steps);
}

void AlternatingSearch::set_vertex_sign(Vertex v, int sign) {
  dual2_[v] = settled_vertex_dual(v);
  YOKE_DCHECK(!may_owe_ || forest_.owed_dual2(v) == 0,
              "set_vertex_sign: a vertex whose node still owes its dual");
  vertex_mark_[v] = {delta_, stamp_, static_cast<std::int8_t>(sign)};
  if (prices_ != nullptr) note_phantom(v, sign);
}

void AlternatingSearch::note_phantom(Vertex v, int sign) {
  if (v == phi_) {
    phantom_dirty_ = true;  // both of φ's bounds change with its label
    return;
  }
  if (sign == 0) {
    prices_->offer(v, dual2_[v]);  // settled: v leaves its tree here
    if (phi_ != kNoVertex && vertex_sign(phi_) < 0) phantom_dirty_ = true;
  } else if (sign < 0 && phi_ != kNoVertex) {
    even_by_due_.emplace_back(delta_ + dual2_[v], v);
    std::push_heap(even_by_due_.begin(), even_by_due_.end(), std::greater<>{});
    phantom_dirty_ = true;
  }
}

Vertex AlternatingSearch::least_even_beside_phantom() {
  // An even vertex in φ's own top node stays there until its tree ends (an even blossom is
  // not expanded), when it is no longer even: its entry can go for good.
  const NodeId phi_top = forest_.top(phi_);
  while (!even_by_due_.empty()) {
    const auto [due, v] = even_by_due_.front();
    const VertexMark& mark = vertex_mark_[v];
    if (mark.stamp == stamp_ && mark.sign < 0 && mark.since + dual2_[v] == due && v != phi_ &&
        forest_.top(v) != phi_top) {
      return v;
    }
    std::pop_heap(even_by_due_.begin(), even_by_due_.end(), std::greater<>{});
    even_by_due_.pop_back();
  }
  return kNoVertex;
}

Weight AlternatingSearch::phantom_due(BoundKind kind, Vertex& other) {
  other = kNoVertex;
  const int phi_sign = vertex_sign(phi_);
  if (kind == kPhantomToEven) {
    // An odd φ keeps its slack to every even vertex; a free one's falls once per step, an
    // even one's twice.
    if (phi_sign > 0) return kNever;
    other = least_even_beside_phantom();
    if (other == kNoVertex) return kNever;
    const Weight slack = phantom_slack2(other);
    return delta_ + (phi_sign < 0 ? slack / 2 : slack);
  }
  if (phi_sign >= 0) return kNever;  // only an even φ reaches out to the free vertices
  const PhantomPrices::Least least = prices_->least(
      [&](Vertex v) { return vertex_dual(v); }, [&](Vertex v) { return vertex_sign(v) != 0; });
  if (least.vertex == kNoVertex) return kNever;
  other = least.vertex;
  return delta_ + vertex_dual(phi_) + least.price2 - 2 * weight_offset_;
}

void AlternatingSearch::queue_phantom_bounds() {
  phantom_dirty_ = false;
  for (const BoundKind kind : {kPhantomToEven, kPhantomToFree}) {
    Vertex other;
    const Weight due = phantom_due(kind, other);
    Weight& queued = phantom_queued_[kind - kPhantomToEven];
    if (due == kNever || due > latest_end_ || due >= queued) continue;
    bounds_.push(due, phi_, kind);
    queued = due;
  }
}

bool AlternatingSearch::phantom_bound_due(const RadixHeap::Entry& entry) {
  const BoundKind kind = static_cast<BoundKind>(entry.kind);
  Weight& queued = phantom_queued_[kind - kPhantomToEven];
  if (entry.key == queued) queued = kNever;
  Vertex other;
  const Weight due = phantom_due(kind, other);
  YOKE_DCHECK(due >= entry.key, "phantom_bound_due: a bound of the phantom vertex came late");
  if (due == entry.key) {
    phantom_other_ = other;
    return true;
  }
  if (due != kNever && due <= latest_end_ && due < queued) {
    bounds_.push(due, phi_, kind);
    queued = due;
  }
  return false;
}

void AlternatingSearch::take_phantom_bound(BoundKind kind) {
  const Vertex other = phantom_other_;
  phantom_dirty_ = true;  // queue the next of its kind
  if (kind == kPhantomToFree) {
    grow_between(phi_, other);
  } else if (vertex_sign(phi_) < 0) {
    join_even_vertices(other, phi_);
  } else {
    grow_between(other, phi_);
  }
}

void AlternatingSearch::settle_blossom_dual(NodeId b) {
  if (forest_.is_vertex(b)) return;
  forest_.set_dual2(b, blossom_dual(b));
  node_since_[b] = delta_;
}

void AlternatingSearch::label_node(NodeId node, Label label, Vertex outer, Vertex inner, Vertex tree) {
  settle_blossom_dual(node);
  node_mark_[node] = {stamp_, label};
  node_since_[node] = delta_;
  tree_outer_[node] = outer;
  tree_inner_[node] = inner;
  tree_of_[node] = tree;
  if (tree != kNoVertex) tree_nodes_[tree].push_back(node);
}

void AlternatingSearch::label_even(NodeId node, Vertex via_odd, Vertex base, Vertex tree) {
  label_node(node, kEven, via_odd, base, tree);
  settle_owed(node);
  forest_.for_each_vertex(node, [&](Vertex v) { make_even(v); });
}

void AlternatingSearch::make_even(Vertex v) {
  set_vertex_sign(v, -1);
  // A lone tree ends by latest_end_, so a bound due later could never be taken: only a vertex
  // whose dual reaches 0 no later is queued, and it becomes the known end (most even vertices
  // of a lone tree hold more dual than its root has left, and queue nothing).
  const Weight due = delta_ + dual2_[v];
  if (due <= latest_end_) {
    bounds_.push(due, v, kEvenVertexDual);
    if (lone_tree_) latest_end_ = due;
  }
  scan_queue_.push_back(v);
}

void AlternatingSearch::label_odd(NodeId node, Vertex via_even, Vertex entry, Vertex tree,
                                  bool vertices_already_odd) {
  label_node(node, kOdd, via_even, entry, tree);
  // A child of an expanding odd blossom that stays odd keeps its vertices' lazy duals as they
  // are (same sign, same start): skipping the pass saves O(|child|) per expanded level.
  if (!vertices_already_odd) {
    settle_owed(node);
    forest_.for_each_vertex(node, [&](Vertex v) { set_vertex_sign(v, +1); });
  }
  YOKE_DCHECK(forest_.pending_dual2(node) == 0, "label_odd: a pending dual left unwritten");
  if (forest_.is_vertex(node)) return;
  const Weight due = delta_ + forest_.dual2(node) / 2;
  if (due <= latest_end_) bounds_.push(due, node, kOddBlossomDual);  // else the tree ends first
}

inline void AlternatingSearch::queue_free_bound(EdgeIndex e, Vertex free_end, Weight due) {
  // A lone tree ends by the time an edge into an exposed vertex (or into a free blossom whose
  // base is exposed) becomes tight: the base stays free and exposed until then (only the tree's
  // end changes the matching, and only a tree node is shrunk or expanded) and taking the edge
  // augments. Bounds due later can never be taken, so none is queued from now on.
  const Vertex partner = free_partner(free_end);
  if (lone_tree_ && partner == kNoVertex) latest_end_ = due;
  bounds_.push(due, e, free_edge_kind_of(partner));
}

template <bool kMayOwe>
void AlternatingSearch::scan_edges(Vertex v) {
  ++stats_.scans;
  const Weight dual_v = vertex_dual(v);
  const NodeId top_v = forest_.top(v);
  // A plain vertex is a top-level node of its own: no even far end can share it.
  const bool top_v_is_blossom = !forest_.is_vertex(top_v);
  const std::span<const Incidence> incident = graph_.incident(v);
  // Held in locals: a push writes memory, after which members read through `this` would be
  // loaded again on every edge. Only latest_end_ can change during the loop (queue_free_bound).
  const VertexMark* const marks = vertex_mark_.data();
  const Weight* const duals = dual2_.data();
  const Vertex* const mates = mate_.values().data();
  const std::uint32_t stamp = stamp_;
  const Weight delta = delta_;
  const Weight offset = weight_offset_;
  // The far ends' search state and duals are scattered reads: ask for all of them before the
  // first is needed, so their misses overlap instead of following one another.
  for (const Incidence& inc : incident) {
    __builtin_prefetch(&marks[inc.other]);
    __builtin_prefetch(&duals[inc.other]);
    __builtin_prefetch(&mates[inc.other]);  // free_partner reads a free end's mate
  }
  // queue_free_edge's and queue_edge's tests, written out: most scanned edges fail them, and
  // they skip the call, the look at the forest and the far end's mate.
  Weight latest_end = latest_end_;
  for (const Incidence& inc : incident) {
    const Weight w2 = 2 * (inc.w + offset);
    if (w2 <= 0) continue;  // never worth taking; its slack stays >= 0 as all duals are >= 0
    // The far end's sign says its top node's label, so most edges need no look at the forest.
    const VertexMark& mark = marks[inc.other];
    const int sign = mark.stamp == stamp ? mark.sign : 0;
    if (sign > 0) continue;  // odd: the slack is constant while one end is even, the other odd
    if (sign == 0) {
      // slack = dual_v + dual_x - w2 is more than v's reach (dual_v) exactly when dual_x > w2.
      // A debt only raises the dual, so the bound: past both tests on the dual alone, add what
      // is owed and test again (the look-up climbs the forest: most edges never need it).
      Weight dual_x = duals[inc.other];
      if (dual_x > w2) continue;
      Weight due = delta + dual_v + dual_x - w2;
      if (due > latest_end) continue;
      if constexpr (kMayOwe) {
        const Weight owed = owed_dual2_slow(inc.other);
        dual_x += owed;
        due += owed;
        if (dual_x > w2 || due > latest_end) continue;
      }
      queue_free_bound(inc.edge, inc.other, due);
      latest_end = latest_end_;
      if (latest_end == delta) break;  // a tight edge into an exposed vertex: the tree ends now
    } else {
      // Both ends even: the slack falls twice as fast, and never exceeds the ends' reach.
      const Weight slack = dual_v + duals[inc.other] - (delta - mark.since) - w2;
      const Weight due = delta + slack / 2;
      if (due > latest_end) continue;
      // Most such edges join two vertices of v's own blossom (a scan after a shrink).
      if (top_v_is_blossom && forest_.top(inc.other) == top_v) continue;
      bounds_.push(due, inc.edge, kEvenEdge);
    }
  }
}

void AlternatingSearch::queue_free_edge(EdgeIndex e, Vertex free_end, Weight slack, Weight reach) {
  // The same tests as queue_edge's, before the kind is looked up: most scanned edges fail them.
  const Weight due = delta_ + slack;
  if (slack > reach || due > latest_end_) return;
  queue_free_bound(e, free_end, due);
}

void AlternatingSearch::queue_edge(EdgeIndex e, Weight slack, Weight reach, BoundKind kind) {
  // An even end stays even for at most its dual's worth of steps (then its tree ends), and an
  // end that turns even again is rescanned. So an edge whose slack exceeds what its even ends
  // can still take away (`reach`) never becomes due in this episode: skip it.
  if (slack > reach) return;
  // A lone tree ends, at the latest, when the smallest dual among its even vertices reaches 0:
  // a bound due later can never be taken.
  const Weight due = delta_ + (kind == kEvenEdge ? slack / 2 : slack);
  if (due > latest_end_) return;
  bounds_.push(due, e, kind);
}

void AlternatingSearch::push_edges_to_even(NodeId node) {
  forest_.for_each_vertex(node, [&](Vertex u) {
    const Weight dual_u = vertex_dual(u);
    for (const Incidence& inc : graph_.incident(u)) {
      const Weight w = inc.w + weight_offset_;
      if (w <= 0 || !is_even_vertex(inc.other)) continue;
      const Weight dual_x = vertex_dual(inc.other);
      queue_free_edge(inc.edge, u, dual_u + dual_x - 2 * w, dual_x);
    }
  });
}

inline bool AlternatingSearch::edge_may_matter(const Edge& e, int sign_a, int sign_b) const {
  // Every transition into an even-free or even-even state queues a fresh entry, except an even
  // end turning free, which relies on the even-even entry: keep exactly those two states.
  if (sign_a > 0 || sign_b > 0) return false;       // an odd end
  if (sign_a == 0 && sign_b == 0) return false;     // no even end
  if (sign_a < 0 && sign_b < 0) return forest_.top(e.a) != forest_.top(e.b);
  return true;
}

inline bool AlternatingSearch::still_due(const RadixHeap::Entry& entry) {
  if (entry.kind >= kPhantomToEven) [[unlikely]] return phantom_bound_due(entry);
  if (entry.kind == kEvenVertexDual || entry.kind == kOddBlossomDual) return may_matter(entry);
  // Either end of the edge may have spent time in another state since the push (free after
  // its tree ended, odd inside a blossom since expanded): recompute, and requeue under the
  // exact key when the entry came early or under the other kind. The edge and its ends' signs
  // are read once, for may_matter's test and for this.
  const Edge& e = graph_.edge(entry.id);
  const int sign_a = vertex_sign(e.a);
  const int sign_b = vertex_sign(e.b);
  if (!edge_may_matter(e, sign_a, sign_b)) return false;
  const bool a_even = sign_a < 0;
  const bool b_even = sign_b < 0;
  const Weight dual_a = vertex_dual(e.a);
  const Weight dual_b = vertex_dual(e.b);
  const Weight slack = dual_a + dual_b - 2 * (e.w + weight_offset_);
  const BoundKind kind = a_even && b_even ? kEvenEdge : free_edge_kind(a_even ? e.b : e.a);
  const Weight due = delta_ + (kind == kEvenEdge ? slack / 2 : slack);
  if (due == entry.key && kind == entry.kind) return true;
  queue_edge(entry.id, slack, (a_even ? dual_a : 0) + (b_even ? dual_b : 0), kind);
  return false;
}

bool AlternatingSearch::may_matter(const RadixHeap::Entry& entry) const {
  switch (entry.kind) {
    case kEvenVertexDual: {
      // Stale when the vertex's tree ended since (it may even have joined another tree).
      const Vertex v = entry.id;
      const VertexMark& mark = vertex_mark_[v];
      return mark.stamp == stamp_ && mark.sign == -1 && entry.key == mark.since + dual2_[v];
    }
    case kOddBlossomDual: {
      const NodeId b = entry.id;
      return forest_.is_live_blossom(b) && forest_.parent(b) == kNoNode && label_of(b) == kOdd &&
             entry.key == node_since_[b] + forest_.dual2(b) / 2;
    }
    case kPhantomToEven:
    case kPhantomToFree:
      return true;  // at most a few, requeued or dropped when they surface
    default:
      break;
  }
  const Edge& e = graph_.edge(entry.id);
  return edge_may_matter(e, vertex_sign(e.a), vertex_sign(e.b));
}

void AlternatingSearch::compact_bounds_if_bloated() {
  // Stale entries only leave the heap when they surface; when the heap has doubled since the
  // last sweep, drop the dead ones. Amortised O(1) per push, and memory stays in proportion
  // to the live bounds.
  if (bounds_.size() < compact_at_) return;
  bounds_.compact([&](const RadixHeap::Entry& entry) { return may_matter(entry); });
  compact_at_ = std::max(kFirstCompaction, 2 * bounds_.size());
}

void AlternatingSearch::start_run() {
  if (++stamp_ == 0) {  // wrapped: old stamps could collide, so clear them once
    for (VertexMark& mark : vertex_mark_) mark.stamp = 0;
    for (NodeMark& mark : node_mark_) mark.stamp = 0;
    stamp_ = 1;
  }
  delta_ = 0;
  bounds_.reset(0);
  compact_at_ = kFirstCompaction;
  scan_queue_.clear();
  may_owe_ = forest_.has_pending();
  even_by_due_.clear();
  phantom_dirty_ = false;
  phantom_queued_[0] = phantom_queued_[1] = kNever;
  running_ = true;
}

void AlternatingSearch::add_root(Vertex root) {
  if (!running_) start_run();
  const NodeId node = forest_.top(root);
  if (!spare_node_lists_.empty() && tree_nodes_[root].capacity() == 0) {
    tree_nodes_[root].swap(spare_node_lists_.back());
    spare_node_lists_.pop_back();
  }
  label_even(node, kNoVertex, forest_.base(node), root);
  ++live_trees_;
  ++stats_.searches;
}

void AlternatingSearch::add_root(Vertex root, EventCause cause) {
  add_root(root);
  root_cause_[root] = cause;
  traces_causes_ = true;
}

void AlternatingSearch::attribute_to(Vertex root) {
  if (traces_causes_) mate_.set_cause(root_cause_[root]);
}

std::size_t AlternatingSearch::run() {
  const std::uint64_t augmentations_before = stats_.augmentations;
  if (live_trees_ == 1 && !half_cycles_mode_) {
    // The root was labelled before the run knew it would be alone: take its bound now.
    lone_tree_ = true;
    for (Vertex v : scan_queue_) latest_end_ = std::min(latest_end_, delta_ + dual2_[v]);
  }
  std::uint64_t level_start_scans = stats_.scans;
  while (live_trees_ > 0) {
    // A lone tree whose known end is the current level ends before any further dual step (an
    // even vertex's dual is 0, or an edge into an exposed vertex is tight): the vertices left in
    // the queue could only queue bounds due now, behind the one that ends it. Unscanned, they
    // keep their labels until end_tree settles them.
    while (!scan_queue_.empty() && latest_end_ != delta_) {
      const Vertex v = scan_queue_.back();
      scan_queue_.pop_back();
      if (!scan_queue_.empty()) __builtin_prefetch(graph_.incident(scan_queue_.back()).data());
      scan(v);
    }
    if (phantom_dirty_) queue_phantom_bounds();
    compact_bounds_if_bloated();
    // Every live tree has an even root, so a valid bound always exists.
    const RadixHeap::Entry entry = bounds_.top();
    bounds_.pop();
    if (!still_due(entry)) {
      ++stats_.stale_bounds;
      continue;
    }
    if (entry.key != delta_) {
      ++stats_.dual_steps;
      level_start_scans = stats_.scans;
    }
    delta_ = entry.key;

    switch (entry.kind) {
      case kExposedEdge:
      case kFreeEdge:
        grow_along(entry.id);
        break;
      case kEvenEdge:
        join_even_ends(entry.id);
        break;
      case kOddBlossomDual:
        expand_odd(entry.id);
        break;
      case kPhantomToEven:
      case kPhantomToFree:
        take_phantom_bound(static_cast<BoundKind>(entry.kind));
        break;
      default: {
        // An even vertex's dual reached zero: it may stay exposed, so shift the matching along
        // the even path from its root to it, and its tree is done.
        const Vertex root = tree_of_[forest_.top(entry.id)];
        attribute_to(root);
        flip_path_to_root(entry.id, kNoVertex);
        end_tree(root);
      }
    }
  }
  stats_.last_level_scans += stats_.scans - level_start_scans;
  scan_queue_.clear();
  running_ = false;
  traces_causes_ = false;  // the next run's roots say again whether they carry causes
  lone_tree_ = false;
  latest_end_ = kNever;
  stats_.heap_pushes = bounds_.pushes();
  return stats_.augmentations - augmentations_before;
}

void AlternatingSearch::grow_along(EdgeIndex e) {
  const Edge& edge = graph_.edge(e);
  const bool a_even = is_even_vertex(edge.a);
  grow_between(a_even ? edge.a : edge.b, a_even ? edge.b : edge.a);
}

void AlternatingSearch::grow_between(Vertex even_end, Vertex free_end) {
  const NodeId node = forest_.top(free_end);
  const Vertex base = forest_.base(node);
  const Vertex tree = tree_of_[forest_.top(even_end)];
  if (mate_[base] == kNoVertex) {
    attribute_to(tree);
    if (half_cycles_mode_ && cycle_next_[free_end] != kNoVertex) open_half_cycle(free_end);
    forest_.make_base(node, free_end, mate_);
    mate_.set(free_end, even_end);
    flip_path_to_root(even_end, free_end);
    ++stats_.augmentations;
    end_tree(tree);
    return;
  }
  const Vertex partner = mate_[base];
  // The partner's list is scanned next: start fetching it while the odd side is labelled.
  __builtin_prefetch(graph_.incident(partner).data());
  label_odd(node, even_end, free_end, tree);
  label_even(forest_.top(partner), base, partner, tree);
}

void AlternatingSearch::join_even_ends(EdgeIndex e) {
  const Edge& edge = graph_.edge(e);
  join_even_vertices(edge.a, edge.b);
}

void AlternatingSearch::join_even_vertices(Vertex a, Vertex b) {
  const Vertex tree_a = tree_of_[forest_.top(a)];
  const Vertex tree_b = tree_of_[forest_.top(b)];
  if (tree_a == tree_b) {
    if (half_cycles_mode_) {
      form_half_cycle(a, b);
    } else {
      shrink(a, b);
    }
    return;
  }
  attribute_to(root_cause_[tree_a] <= root_cause_[tree_b] ? tree_a : tree_b);
  flip_path_to_root(a, b);
  flip_path_to_root(b, a);
  ++stats_.augmentations;
  end_tree(tree_a);
  end_tree(tree_b);
}

void AlternatingSearch::flip_path_to_root(Vertex v, Vertex partner) {
  for (;;) {
    const NodeId even_node = forest_.top(v);
    const Vertex odd_vertex = tree_outer_[even_node];
    forest_.make_base(even_node, v, mate_);
    mate_.set(v, partner);
    if (odd_vertex == kNoVertex) return;
    const NodeId odd_node = forest_.top(odd_vertex);
    const Vertex next_even = tree_outer_[odd_node];
    const Vertex entry = tree_inner_[odd_node];
    forest_.make_base(odd_node, entry, mate_);
    mate_.set(entry, next_even);
    v = next_even;
    partner = entry;
  }
}

void AlternatingSearch::end_tree(Vertex root) {
  std::vector<NodeId>& nodes = tree_nodes_[root];
  // Only the nodes still at top level and still in this tree carry labels; the others were
  // absorbed into blossoms or dissolved (their successors are in the list too).
  auto in_tree = [&](NodeId node) {
    return (forest_.is_vertex(node) || forest_.is_live_blossom(node)) &&
           forest_.parent(node) == kNoNode && label_of(node) != kFree && tree_of_[node] == root;
  };
  std::size_t kept = 0;
  for (NodeId node : nodes) {
    if (!in_tree(node)) continue;
    // Edges from formerly even vertices to other trees already sit in the queue as even-even
    // bounds and are requeued as even-free ones when they surface; odd ones were never queued.
    const bool odd = label_of(node) == kOdd;
    if (odd) nodes[kept++] = node;
    settle_blossom_dual(node);
    node_mark_[node].label = kFree;
    tree_of_[node] = kNoVertex;
    forest_.for_each_vertex(node, [&](Vertex u) { set_vertex_sign(u, 0); });
    if (!odd) dissolve_unpriced(node);
  }
  // The freed odd vertices may border even vertices of other trees, if any are left.
  if (live_trees_ > 1) {
    for (std::size_t i = 0; i < kept; ++i) push_edges_to_even(nodes[i]);
  }
  nodes.clear();
  // The lists belong to root vertices, so a list kept would hold memory per vertex that ever
  // was a root: a few go back to the spares for the next trees, the rest are freed.
  if (spare_node_lists_.size() < kSpareNodeLists) {
    spare_node_lists_.emplace_back().swap(nodes);
  } else {
    nodes.shrink_to_fit();
  }
  --live_trees_;
}

void AlternatingSearch::dissolve_unpriced(NodeId node) {
  // A free blossom whose dual is 0 costs nothing to undo now, and would only be expanded (or
  // carried as dead weight) by the next tree that reaches it. A tree at one dual level nests
  // such blossoms hundreds deep: they go in one pass over the vertices.
  if (forest_.is_vertex(node) || forest_.dual2(node) != 0) return;
  forest_.dissolve_unpriced_nest(node);
}

NodeId AlternatingSearch::meeting_node(NodeId x, NodeId y) {
  auto even_parent = [&](NodeId node) {
    return forest_.top(tree_outer_[forest_.top(tree_outer_[node])]);
  };
  // Climb from both ends in turn; the first even node reached twice is where the paths meet.
  if (++mark_stamp_ == 0) {
    std::fill(mark_.begin(), mark_.end(), 0);
    mark_stamp_ = 1;
  }
  mark_[x] = mark_[y] = mark_stamp_;
  for (;;) {
    if (tree_outer_[x] != kNoVertex) {
      x = even_parent(x);
      if (mark_[x] == mark_stamp_) return x;
      mark_[x] = mark_stamp_;
    }
    if (tree_outer_[y] != kNoVertex) {
      y = even_parent(y);
      if (mark_[y] == mark_stamp_) return y;
      mark_[y] = mark_stamp_;
    }
  }
}

void AlternatingSearch::collect_cycle(Vertex v, Vertex w, NodeId meet) {
  // Cycle order: the meeting node, down the tree path to v's node, across {v, w}, up to the
  // meeting node again. Each tree step is the edge (tree_inner_, tree_outer_) of the lower node.
  side_nodes_.clear();
  side_edges_.clear();
  for (NodeId node = forest_.top(v); node != meet; node = forest_.top(tree_outer_[node])) {
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
  for (NodeId node = forest_.top(w); node != meet; node = forest_.top(tree_outer_[node])) {
    cycle_nodes_.push_back(node);
    cycle_edges_.push_back({tree_inner_[node], tree_outer_[node]});
  }
}

void AlternatingSearch::shrink(Vertex v, Vertex w) {
  const Vertex tree = tree_of_[forest_.top(v)];
  const NodeId meet = meeting_node(forest_.top(v), forest_.top(w));
  collect_cycle(v, w, meet);
  const Vertex outer = tree_outer_[meet];
  const Vertex inner = tree_inner_[meet];
  for (NodeId node : cycle_nodes_) {
    const Label was = label_of(node);
    settle_blossom_dual(node);  // frozen from now on: the node is no longer top level
    node_mark_[node].label = kFree;
    if (was == kOdd) forest_.for_each_vertex(node, [&](Vertex u) { make_even(u); });
  }
  const NodeId b = forest_.make_blossom(cycle_nodes_, cycle_edges_);
  label_node(b, kEven, outer, inner, tree);
  ++stats_.blossoms_formed;
}

void AlternatingSearch::form_half_cycle(Vertex v, Vertex w) {
  const Vertex tree = tree_of_[v];
  const NodeId meet = meeting_node(v, w);
  collect_cycle(v, w, meet);
  // The stem from the root to the cycle flips, so the root is covered; every cycle vertex is
  // covered by two half edges, and every cycle edge is tight.
  flip_path_to_root(meet, kNoVertex);
  const std::size_t k = cycle_nodes_.size();
  for (std::size_t i = 0; i < k; ++i) {
    mate_.set(cycle_nodes_[i], kNoVertex);
    cycle_next_[cycle_nodes_[i]] = cycle_nodes_[(i + 1) % k];
  }
  half_cycles_.push_back(meet);
  ++stats_.augmentations;
  end_tree(tree);
}

void AlternatingSearch::open_half_cycle(Vertex x) {
  Vertex y = cycle_next_[x];
  cycle_next_[x] = kNoVertex;
  while (y != x) {
    const Vertex z = cycle_next_[y];
    const Vertex after = cycle_next_[z];
    mate_.set(y, z);
    mate_.set(z, y);
    cycle_next_[y] = cycle_next_[z] = kNoVertex;
    y = after;
  }
}

std::size_t AlternatingSearch::settle_half_cycles() {
  std::size_t open = 0;
  for (Vertex v : half_cycles_) {
    if (cycle_next_[v] == kNoVertex) continue;  // a later tree already augmented into it
    open_half_cycle(v);
    ++open;
  }
  half_cycles_.clear();
  return open;
}

void AlternatingSearch::expand_odd(NodeId b) {
  ++stats_.blossoms_expanded;
  const Vertex reached_from = tree_outer_[b];
  const Vertex reached_at = tree_inner_[b];
  const Vertex tree = tree_of_[b];
  cycle_nodes_ = forest_.children(b);
  cycle_edges_ = forest_.cycle_edges(b);
  node_mark_[b].label = kFree;
  // O(children): the vertices of the children that stay odd are not visited (their top() is
  // repaired when first asked); the others are visited below anyway.
  forest_.dissolve(b);

  const std::size_t k = cycle_nodes_.size();
  const NodeId entry = forest_.top(reached_at);
  const std::size_t i = static_cast<std::size_t>(
      std::find(cycle_nodes_.begin(), cycle_nodes_.end(), entry) - cycle_nodes_.begin());
  // Relabel the even-length side of the cycle from the entry child to the base child as a
  // piece of the tree (odd, even, ..., odd); the children on the other side leave the tree.
  label_odd(entry, reached_from, reached_at, tree, /*vertices_already_odd=*/true);
  std::size_t free_first, free_last;  // the children leaving the tree, [first, last)
  if (i % 2 == 1) {
    for (std::size_t j = i; j != k; j += 2) {
      const CycleEdge matched = cycle_edges_[j];
      const CycleEdge next = cycle_edges_[j + 1];
      forest_.settle_top(cycle_nodes_[j + 1]);
      label_even(cycle_nodes_[j + 1], matched.from, matched.to, tree);
      label_odd(cycle_nodes_[(j + 2) % k], next.from, next.to, tree, true);
    }
    free_first = 1;
    free_last = i;
  } else {
    for (std::size_t j = i; j != 0; j -= 2) {
      const CycleEdge matched = cycle_edges_[j - 1];
      const CycleEdge next = cycle_edges_[j - 2];
      forest_.settle_top(cycle_nodes_[j - 1]);
      label_even(cycle_nodes_[j - 1], matched.to, matched.from, tree);
      label_odd(cycle_nodes_[j - 2], next.to, next.from, tree, true);
    }
    free_first = i + 1;
    free_last = k;
  }
  for (std::size_t j = free_first; j < free_last; ++j) {
    const NodeId child = cycle_nodes_[j];
    label_node(child, kFree, kNoVertex, kNoVertex, kNoVertex);
    forest_.settle_top(child);
    forest_.for_each_vertex(child, [&](Vertex u) { set_vertex_sign(u, 0); });
  }
  for (std::size_t j = free_first; j < free_last; ++j) push_edges_to_even(cycle_nodes_[j]);
}

}  // namespace yoke
