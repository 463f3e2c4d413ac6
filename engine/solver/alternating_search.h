// The primal-dual search: grows alternating trees from every root that breaks the optimality
// conditions (an exposed vertex with positive dual) at once, with one shared dual step, until
// every tree has ended: by augmenting (into a free exposed vertex or into another tree) or
// because one of its S-vertex duals reached zero, where the matching shifts along the even path
// so that vertex becomes the exposed one. Trees that an augmentation does not touch live on.
//
// Locality: labels carry a run stamp (no clearing), vertex and blossom duals change lazily
// (value at labelling + the running total of dual steps, settled when a tree ends), and the
// four bounds on each dual step sit in min-heaps keyed so that a key stays exact while its
// bound is valid; stale entries are recognised when they surface. A run costs
// O(R log R) for a region of R touched vertices and edges.
#pragma once

#include <cstdint>
#include <limits>
#include <vector>

#include "solver/matching_state.h"
#include "solver/phantom_prices.h"
#include "solver/radix_heap.h"
#include "yoke/graph.h"
#include "yoke/solve.h"

namespace yoke {

class AlternatingSearch {
 public:
  // `weight_offset` is added to every edge weight (the mode's transformation).
  //
  // With `half_cycles`, the search solves the fractional relaxation instead (no odd-set
  // constraints; precondition: no blossoms yet): a tree that closes an odd cycle turns it into
  // a half-matched cycle instead of a blossom, and a later tree may augment into any vertex of
  // such a cycle. Its optimum is a cheap, near-integral warm start: settle_half_cycles() then
  // matches every remaining cycle but one vertex, which becomes a root of the exact search.
  AlternatingSearch(const Graph& graph, Weight weight_offset, MatchingState& state,
                    bool half_cycles = false);
  AlternatingSearch(const AlternatingSearch&) = delete;
  AlternatingSearch& operator=(const AlternatingSearch&) = delete;

  // Starts a tree at `root`. Preconditions: root is exposed, its doubled dual is positive and
  // has the same parity as every other root of this run (so every dual step is integral).
  void add_root(Vertex root);
  // The same, and the mates this tree writes are tagged with `cause` (Mates::set_cause); two
  // trees that meet write with the earlier of their causes.
  void add_root(Vertex root, EventCause cause);
  // Grows all trees until each has ended. Returns the number of augmentations.
  std::size_t run();

  // Fractional mode only: matches each half-matched cycle along its cycle, leaving one vertex
  // exposed. Returns the number of cycles.
  std::size_t settle_half_cycles();

  const SolveStats& stats() const { return stats_; }

  // The phantom vertex φ (docs/mathematics.md §9): `phi`, a vertex of the graph with no stored
  // edges, is joined to every vertex `prices` has joined by an implicit edge of weight 0 (so
  // 2 x weight_offset doubled, after the offset). kNoVertex: no φ. With `prices` attached (φ
  // or not), every vertex a tree lets go is offered to it at its settled price, which keeps
  // the prices' invariant across runs. Call between runs; both must outlive the search.
  void set_phantom(Vertex phi, PhantomPrices* prices) {
    phi_ = phi;
    prices_ = prices;
  }
  Vertex phantom() const { return phi_; }

 private:
  enum Label : std::uint8_t { kFree = 0, kEven = 1, kOdd = 2 };  // S = even, T = odd

  // At equal keys the lower kind goes first. A tree ends as soon as it can: augmenting into an
  // exposed vertex or stopping at an even vertex whose dual reached 0 goes before anything
  // else that became tight at the same dual level (a search on tied weights would otherwise
  // flood that whole level first). Then closing cycles and joining trees before growing keeps
  // trees small, so fewer vertices are rescanned when a tree ends.
  enum BoundKind : std::uint32_t {
    kExposedEdge = 0,      // an even-to-free edge that ends the tree becomes tight (free_edge_kind)
    kEvenVertexDual = 1,   // an even vertex's dual reaches 0
    kEvenEdge = 2,         // an even-to-even edge becomes tight
    kFreeEdge = 3,         // an even-to-free edge becomes tight
    kOddBlossomDual = 4,   // an odd blossom's dual reaches 0
    // φ's implicit edges, one pending bound per kind for all of them (the id is unused):
    kPhantomToEven = 5,    // φ even or free: its edge to the even vertex of least dual
    kPhantomToFree = 6,    // φ even: its edge to the free vertex of least price
  };
  // The vertex that taking an edge into free vertex x would make even: the mate of the base of
  // x's top-level node (kNoVertex when that base is exposed: taking the edge augments). Inside
  // a free blossom x's own mate is another vertex of the blossom, not the one that turns even.
  Vertex free_partner(Vertex x) const {
    if (forest_.parent(x) == kNoNode) return mate_[x];
    return mate_[forest_.base(forest_.top(x))];
  }
  // The kind of a bound on an edge into a free vertex whose free_partner is `partner`:
  // kExposedEdge when taking it ends the tree at once (the base is exposed, or the partner has
  // dual 0 and would stop the tree as soon as it turns even). A heuristic of order only, read
  // from settled duals (both are free).
  BoundKind free_edge_kind_of(Vertex partner) const {
    // A debt is never negative: only a partner whose own dual is 0 needs a look at its node.
    return partner == kNoVertex || (dual2_[partner] == 0 && owed_dual2(partner) == 0)
               ? kExposedEdge
               : kFreeEdge;
  }
  BoundKind free_edge_kind(Vertex x) const { return free_edge_kind_of(free_partner(x)); }
  // What a pool's dissolution still owes vertex v's dual (BlossomForest::pending_dual2): 0 for
  // a vertex this run labelled (its node's debt was written then) and outside a pool's repair.
  Weight owed_dual2(Vertex v) const { return may_owe_ ? owed_dual2_slow(v) : 0; }
  // Out of line: a search outside a pool's repair, or in one that dissolved nothing priced,
  // pays one test of a flag per read and keeps its inlining as it was.
  [[gnu::noinline]] Weight owed_dual2_slow(Vertex v) const;
  // Labelling `node` passes over its vertices: write what it is owed into them first.
  void settle_owed(NodeId node) {
    if (may_owe_) settle_owed_slow(node);
  }
  void settle_owed_slow(NodeId node);

  // Lazy duals.
  [[gnu::always_inline]] Weight vertex_dual(Vertex v) const {
    const VertexMark& mark = vertex_mark_[v];
    if (mark.stamp != stamp_) return dual2_[v] + owed_dual2(v);
    return dual2_[v] + mark.sign * (delta_ - mark.since);
  }
  // vertex_dual for a vertex whose node owes nothing: labelled in this run, or just settled.
  [[gnu::always_inline]] Weight settled_vertex_dual(Vertex v) const {
    const VertexMark& mark = vertex_mark_[v];
    if (mark.stamp != stamp_) return dual2_[v];
    return dual2_[v] + mark.sign * (delta_ - mark.since);
  }
  Weight blossom_dual(NodeId b) const;
  Label label_of(NodeId node) const {
    const NodeMark& mark = node_mark_[node];
    return mark.stamp == stamp_ ? static_cast<Label>(mark.label) : kFree;
  }
  // Settles the dual, then follows `sign`. Inlined: labelling calls it once per vertex. Only for
  // a vertex whose node owes nothing (every caller labels a node it settled, or relabels one).
  [[gnu::always_inline]] inline void set_vertex_sign(Vertex v, int sign);
  // -1 even, +1 odd, 0 free: a vertex's sign always follows the label of its top-level node
  // (every relabelling sets its vertices' signs), so this avoids a climb in the forest.
  int vertex_sign(Vertex v) const {
    const VertexMark& mark = vertex_mark_[v];
    return mark.stamp == stamp_ ? mark.sign : 0;
  }
  bool is_even_vertex(Vertex v) const { return vertex_sign(v) < 0; }
  void settle_blossom_dual(NodeId b);

  // Tree growth.
  void label_node(NodeId node, Label label, Vertex outer, Vertex inner, Vertex tree);
  void label_even(NodeId node, Vertex via_odd, Vertex base, Vertex tree);
  void make_even(Vertex v);
  void label_odd(NodeId node, Vertex via_even, Vertex entry, Vertex tree,
                 bool vertices_already_odd = false);
  // Queues the bounds of v's edges. Two copies of the edge loop: a run in which nothing is
  // owed (most of them) keeps the loop free of the debt's test and its call.
  void scan(Vertex v) { may_owe_ ? scan_edges<true>(v) : scan_edges<false>(v); }
  template <bool kMayOwe>
  void scan_edges(Vertex v);
  void push_edges_to_even(NodeId node);
  void queue_edge(EdgeIndex e, Weight slack, Weight reach, BoundKind kind);
  void queue_free_edge(EdgeIndex e, Vertex free_end, Weight slack, Weight reach);
  // Past queue_free_edge's tests. Forced inline: scan calls it for most edges into free vertices,
  // and a call there costs the saving and restoring of scan's registers each time.
  [[gnu::always_inline]] void queue_free_bound(EdgeIndex e, Vertex free_end, Weight due);
  void grow_along(EdgeIndex e);
  void grow_between(Vertex even_end, Vertex free_end);  // along a tight edge into a free node
  void join_even_ends(EdgeIndex e);
  void join_even_vertices(Vertex a, Vertex b);  // shrink within a tree, or augment across two
  NodeId meeting_node(NodeId x, NodeId y);    // nearest common even ancestor in one tree
  void collect_cycle(Vertex v, Vertex w, NodeId meet);  // into cycle_nodes_ / cycle_edges_
  void shrink(Vertex v, Vertex w);
  void form_half_cycle(Vertex v, Vertex w);
  void open_half_cycle(Vertex x);             // matches the cycle around x; x stays exposed
  void expand_odd(NodeId b);
  void flip_path_to_root(Vertex v, Vertex partner);
  void end_tree(Vertex root);                 // its nodes leave the tree structure, duals settle
  void attribute_to(Vertex root);             // tags the coming mate writes with root's cause
  void dissolve_unpriced(NodeId node);        // dissolves a free blossom with dual 0, and nested ones
  void start_run();

  // The bounds on a dual step (BoundKind). An entry's key is never later than the moment its bound is
  // reached; entries that went stale are dropped or requeued with their exact key when they
  // surface (still_due).
  // Forced inline, as is edge_may_matter: run() tests every entry it takes.
  [[gnu::always_inline]] bool still_due(const RadixHeap::Entry& entry);
  // False for entries that can never become due again in the current state's future (still_due
  // would drop them without requeueing). No side effects.
  bool may_matter(const RadixHeap::Entry& entry) const;
  // Its part for edge entries.
  [[gnu::always_inline]] bool edge_may_matter(const Edge& e, int sign_a, int sign_b) const;
  void compact_bounds_if_bloated();

  // φ's bounds. Each kind's exact key (and the vertex at its other end) is recomputed from
  // the least even dual and the least free price whenever something may have lowered it
  // (phantom_dirty_) and when its entry surfaces; the heap holds an entry no later than it.
  [[gnu::noinline]] void note_phantom(Vertex v, int sign);  // set_vertex_sign's part for φ
  void queue_phantom_bounds();
  Weight phantom_due(BoundKind kind, Vertex& other);  // kNever when the bound does not exist
  Vertex least_even_beside_phantom();
  Weight phantom_slack2(Vertex v) const {
    return vertex_dual(v) + vertex_dual(phi_) - 2 * weight_offset_;
  }
  bool phantom_bound_due(const RadixHeap::Entry& entry);  // still_due for φ's kinds
  void take_phantom_bound(BoundKind kind);

  const Graph& graph_;
  const Weight weight_offset_;
  const bool half_cycles_mode_;
  std::vector<Vertex> cycle_next_;   // fractional mode: successor on a half-matched cycle
  std::vector<Vertex> half_cycles_;  // fractional mode: one vertex of each cycle formed
  BlossomForest& forest_;
  Mates& mate_;
  std::vector<Weight>& dual2_;
  SolveStats stats_;

  std::uint32_t stamp_ = 0;
  Weight delta_ = 0;  // sum of the dual steps taken in this run

  // Per vertex.
  // Kept together so that reading a lazy dual touches one cache line of search state.
  struct VertexMark {
    Weight since = 0;         // delta_ when the sign was last set
    std::uint32_t stamp = 0;  // the run that set it
    std::int8_t sign = 0;     // -1 even (dual falls), +1 odd (dual rises), 0 free
  };
  std::vector<VertexMark> vertex_mark_;
  // Per node (vertex or blossom slot).
  struct NodeMark {
    std::uint32_t stamp = 0;  // the run that set the label
    std::uint8_t label = kFree;
  };
  std::vector<NodeMark> node_mark_;
  std::vector<Weight> node_since_;         // delta_ when the label was set
  // The tree edge above a labelled node: for an odd node, the even vertex that reached it and
  // the vertex inside it; for an even node, its mate outside (kNoVertex at the root) and its base.
  std::vector<Vertex> tree_outer_;
  std::vector<Vertex> tree_inner_;
  std::vector<Vertex> tree_of_;            // per node: the root vertex of its tree
  std::vector<std::vector<NodeId>> tree_nodes_;  // per root vertex: nodes labelled in its tree
  // Emptied lists of ended trees, their memory reused by the next roots (a pool's repair starts
  // one tree after another: without them, each tree's list grew from nothing again).
  std::vector<std::vector<NodeId>> spare_node_lists_;
  static constexpr std::size_t kSpareNodeLists = 4;
  std::size_t live_trees_ = 0;
  // Per root vertex: the event its tree's mate writes go back to; used in runs whose roots
  // were added with a cause (traces_causes_), so that trees grown together keep their own.
  std::vector<EventCause> root_cause_;
  bool traces_causes_ = false;
  // A run with a single tree (a pool's repair) knows the tree ends by latest_end_ (the least
  // key of its even vertices' dual bounds and of its edges into exposed vertices), and queues
  // no bound due after it: no edge, vertex or blossom bound.
  static constexpr Weight kNever = std::numeric_limits<Weight>::max();
  bool lone_tree_ = false;
  Weight latest_end_ = kNever;
  bool running_ = false;
  // Whether the pool's forest may owe duals (BlossomForest::has_pending), read at a run's start:
  // a run creates no debt, so a run that starts without one reads every dual as it is.
  bool may_owe_ = false;
  std::vector<std::uint32_t> mark_;        // scratch stamps for finding the tree's meeting point
  std::uint32_t mark_stamp_ = 0;

  std::vector<Vertex> scan_queue_;

  // φ (set_phantom). even_by_due_: this run's even vertices by the step at which their dual
  // would reach 0 (so the least is the one of least dual), lazily deleted.
  Vertex phi_ = kNoVertex;
  PhantomPrices* prices_ = nullptr;
  std::vector<std::pair<Weight, Vertex>> even_by_due_;
  bool phantom_dirty_ = false;
  Weight phantom_queued_[2] = {kNever, kNever};  // least key pending per φ kind
  Vertex phantom_other_ = kNoVertex;             // the far end of the φ bound just taken

  RadixHeap bounds_;  // key: the value of delta_ at which the bound is reached
  std::size_t compact_at_ = kFirstCompaction;
  static constexpr std::size_t kFirstCompaction = std::size_t{1} << 16;

  std::vector<NodeId> cycle_nodes_;      // scratch for shrink
  std::vector<CycleEdge> cycle_edges_;   // scratch for shrink
  std::vector<NodeId> side_nodes_;       // scratch for shrink
  std::vector<CycleEdge> side_edges_;    // scratch for shrink
};

}  // namespace yoke
