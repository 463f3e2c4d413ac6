// The laminar family of blossoms and the matching they structure.
//
// Node ids: 0 .. n-1 are vertices (trivial blossoms), n .. 2n-1 are blossom slots, recycled
// through a free list. Each blossom keeps its children in cycle order, starting with the child
// that holds its base, and the edge joining each child to the next. The vertices of every
// blossom form one contiguous run of a shared linked list (first_leaf .. last_leaf), so a
// blossom's vertices are listed in O(|B|) with no recursion and no per-vertex membership lists.
#pragma once

#include <cstdint>
#include <vector>

#include "solver/mates.h"
#include "yoke/certificate.h"
#include "yoke/types.h"
#include "yoke/util/byte_io.h"

namespace yoke {

inline constexpr NodeId kNoNode = std::numeric_limits<NodeId>::max();

// The edge of a blossom's cycle joining child i (holding `from`) to child i+1 (holding `to`).
struct CycleEdge {
  Vertex from;
  Vertex to;
};

class BlossomForest {
 public:
  explicit BlossomForest(std::size_t vertex_count = 0);

  std::size_t vertex_count() const { return vertex_count_; }
  bool is_vertex(NodeId node) const { return node < vertex_count_; }
  bool is_live_blossom(NodeId node) const {
    return !is_vertex(node) && !children_[node - vertex_count_].empty();
  }

  NodeId parent(NodeId node) const { return parent_[node]; }
  // The top-level node containing v. top_[v] caches an ancestor-or-self of v with the version
  // its slot had then; forming a blossom does not touch its vertices, and neither does
  // dissolve(): a cached blossom dissolved since (its slot's version moved on) sends the lookup
  // back to v itself. The next lookup climbs the levels above and remembers the result.
  // Forced inline: the search calls it per scanned edge, and in a unity build's large units
  // GCC's inlining budget runs out before it gets there.
  [[gnu::always_inline]] NodeId top(Vertex v) const {
    // The common case: the cache still names a top-level node. The climb is out of line.
    const TopCache cache = top_[v];
    if (version_[cache.node] == cache.version && parent_[cache.node] == kNoNode) return cache.node;
    return climb_to_top(v);
  }
  Vertex base(NodeId node) const { return base_[node]; }
  Weight dual2(NodeId node) const { return dual2_[node]; }
  void set_dual2(NodeId node, Weight z2) { dual2_[node] = z2; }
  const std::vector<NodeId>& children(NodeId b) const { return children_[b - vertex_count_]; }
  const std::vector<CycleEdge>& cycle_edges(NodeId b) const { return edges_[b - vertex_count_]; }

  // Calls f(v) for every vertex of `node`, in list order. O(|node|).
  template <class F>
  void for_each_vertex(NodeId node, F&& f) const {
    for (Vertex v = first_leaf_[node];; v = next_leaf_[v]) {
      f(v);
      if (v == last_leaf_[node]) break;
    }
  }

  // Forms a top-level blossom from top-level `children` (cycle order, base child first) and the
  // edges joining them. O(number of children).
  NodeId make_blossom(const std::vector<NodeId>& children, const std::vector<CycleEdge>& edges);

  // Dissolves top-level blossom `b` into its children, which become top-level. O(number of
  // children): its vertices' top() is repaired lazily, or at once by settle_top().
  void dissolve(NodeId b);

  // Sets the top() cache of every vertex of top-level node `node` to it, for a caller that
  // passes over those vertices anyway (a lookup then costs no climb). O(|node|).
  void settle_top(NodeId node) {
    for_each_vertex(node, [&](Vertex v) { top_[v] = {node, version_[node]}; });
  }

  // Dissolves top-level blossom `b` and, below it, every blossom with dual 0 whose parent is
  // dissolved here; the other children become top-level. Each vertex's top() is set once, to
  // its new top-level node, so a nest of D levels costs O(|b| + D), not O(|b| x D) as D calls
  // of dissolve() would.
  void dissolve_unpriced_nest(NodeId b);

  // Dissolves blossom `lowest` and all its ancestors, moving their duals
  // onto their vertices: each vertex gains z/2 of every dissolved blossom holding it (doubled:
  // `vertex_dual2` += z2/2). Edges inside a dissolved blossom keep their slack and edges leaving
  // it gain, so feasibility holds; only the matched edges at the dissolved blossoms' bases can
  // lose tightness, and those bases are appended to `bases` for the caller to check.
  // A child of fewer than kOwedFromSize vertices gets its gain at once; a larger one is owed it
  // (pending_dual2, written to its vertices when a search labels it or by flush_pending), and
  // its vertices' top() is repaired lazily as after dissolve(). Returns the number of vertices
  // whose dual was written. O(path length + children + vertices of the small children).
  std::size_t dissolve_path(NodeId lowest, std::vector<Weight>& vertex_dual2,
                            std::vector<Vertex>& bases);

  // Dual owed by dissolve_path to every vertex of top-level blossom `node`, doubled (>= 0): the
  // dual of a vertex v is vertex_dual2[v] + pending_dual2(top(v)). 0 for every other node.
  Weight pending_dual2(NodeId node) const { return pending2_[node]; }
  // What vertex v is owed: its top-level node's pending dual. O(1) with a settled top() cache.
  Weight owed_dual2(Vertex v) const { return pending2_[top(v)]; }
  static constexpr std::uint32_t kOwedFromSize = 128;
  // Whether some node still owes a pending dual (written ones no longer count).
  bool has_pending() const { return owing_ != 0; }
  // Blossoms given a pending dual since the last flush (some may have been written since).
  std::size_t pending_count() const { return pending_nodes_.size(); }
  // For a caller that has just written node's pending dual into its vertices.
  void clear_pending(NodeId node) {
    if (pending2_[node] == 0) return;
    pending2_[node] = 0;
    --owing_;
  }
  // Writes every pending dual into its vertices. Returns the number of vertices written.
  // O(that count + blossoms given a pending dual since the last flush).
  std::size_t flush_pending(std::vector<Weight>& vertex_dual2);

  // Number of vertices in `node`. O(1).
  std::uint32_t size(NodeId node) const { return size_[node]; }

  // Makes room for vertices up to `vertex_count` (isolated, top level). Blossom ids change:
  // call only when no node id is held outside the forest. O(new vertex_count).
  void grow(std::size_t vertex_count);

  // The child of blossom `b` that contains vertex v. O(depth of v below b).
  NodeId child_containing(NodeId b, Vertex v) const;

  // Rotates blossom `b` (and, recursively, its sub-blossoms) so that v becomes its base,
  // flipping the matched edges inside so that every vertex of b but v stays matched within b.
  // Iterative; O(|b|) in the worst case; a no-op when b is a vertex.
  void make_base(NodeId b, Vertex v, Mates& mate);

  // Live blossoms in increasing slot order (for certificates and tests). O(n).
  std::vector<NodeId> live_blossoms() const;

  // The live blossoms as a certificate lists them: vertex v is named vertex_id[v] (v itself
  // when vertex_id is empty), blossom k of the list is vertex_ids + k. O(n + total children).
  std::vector<CertificateBlossom> certificate_blossoms(const std::vector<Vertex>& vertex_id,
                                                      std::size_t vertex_ids) const;

  // The whole forest, slot order and free list included, and back. load() checks that the
  // bytes describe a laminar family whose leaf runs are consistent (every blossom larger than
  // each child, so no cycle) and throws InputError otherwise. O(n + total children).
  void save(ByteWriter& out) const;
  static BlossomForest load(ByteReader& in);

 private:
  std::size_t vertex_count_;
  std::vector<NodeId> parent_;        // per node; kNoNode at top level
  struct TopCache {
    NodeId node;            // an ancestor-or-self of the vertex when cached
    std::uint32_t version;  // version_[node] then
  };
  mutable std::vector<TopCache> top_;  // per vertex (see top())
  // Per node: an ancestor an earlier climb found above it (itself: none yet), a shortcut for
  // the next climb through it. A node leaves the forest only from the top level, so an
  // ancestor stays one until its slot is freed, which its version tells (climb_to_top).
  mutable std::vector<TopCache> node_top_;
  std::vector<std::uint32_t> version_;  // per node: bumped whenever a blossom slot is freed
  std::vector<Vertex> base_;          // per node
  std::vector<Weight> dual2_;         // per node: 2 z(B); unused for vertices
  std::vector<Weight> pending2_;      // per node: see pending_dual2()
  std::vector<NodeId> pending_nodes_;  // blossoms given a pending dual since the last flush
  std::size_t owing_ = 0;              // nodes whose pending dual is not 0
  std::vector<Vertex> first_leaf_;    // per node
  std::vector<Vertex> last_leaf_;     // per node
  std::vector<std::uint32_t> size_;   // per node: number of vertices
  std::vector<Vertex> next_leaf_;     // per vertex
  std::vector<std::vector<NodeId>> children_;   // per blossom slot
  std::vector<std::vector<CycleEdge>> edges_;   // per blossom slot
  std::vector<NodeId> free_slots_;    // unused blossom slots, lowest on top

  struct BaseWork {
    NodeId blossom;
    Vertex vertex;
    NodeId entry;  // child of `blossom` holding `vertex`, or kNoNode when not yet known
  };
  std::vector<BaseWork> base_work_;   // scratch for make_base
  std::vector<NodeId> path_;          // scratch for dissolve_path
  std::vector<NodeId> nest_;          // scratch for dissolve_unpriced_nest

  NodeId climb_to_top(Vertex v) const;  // top()'s climb, which also refreshes v's cache
  void free_slot(NodeId b);  // b's children are already detached
  void reset_top_caches();  // every vertex's cache and node's shortcut back to itself
  void reset_shortcuts();   // every node's shortcut back to itself (all 2 x vertex_count_)

  void check_loaded() const;
};

}  // namespace yoke
