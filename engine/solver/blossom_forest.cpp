#include "solver/blossom_forest.h"

#include <algorithm>
#include <string>
#include <type_traits>

#include "yoke/util/dcheck.h"

namespace yoke {

NodeId BlossomForest::climb_to_top(Vertex v) const {
  TopCache& cache = top_[v];
  const NodeId start = version_[cache.node] == cache.version ? cache.node : v;
  // Up by a node's shortcut while it still names an ancestor, else by its parent. A nest of
  // blossoms can be thousands deep (max-cardinality pools), and when its top is dissolved every
  // vertex's cache goes stale at once: without the shortcuts each one climbed the whole nest.
  const auto up = [this](NodeId node) {
    const TopCache jump = node_top_[node];
    return jump.node != node && version_[jump.node] == jump.version ? jump.node : parent_[node];
  };
  NodeId top = start;
  while (parent_[top] != kNoNode) top = up(top);
  // Every node passed names the top from now on (path compression), and so does v.
  const TopCache found{top, version_[top]};
  for (NodeId node = start; node != top;) {
    const NodeId next = up(node);
    node_top_[node] = found;
    node = next;
  }
  cache = found;
  return top;
}

BlossomForest::BlossomForest(std::size_t vertex_count)
    : vertex_count_(vertex_count),
      parent_(2 * vertex_count, kNoNode),
      top_(vertex_count),
      version_(2 * vertex_count, 0),
      base_(2 * vertex_count, kNoVertex),
      dual2_(2 * vertex_count, 0),
      pending2_(2 * vertex_count, 0),
      first_leaf_(2 * vertex_count, kNoVertex),
      last_leaf_(2 * vertex_count, kNoVertex),
      size_(2 * vertex_count, 1),
      next_leaf_(vertex_count, kNoVertex),
      children_(vertex_count),
      edges_(vertex_count) {
  reset_shortcuts();
  for (Vertex v = 0; v < vertex_count; ++v) {
    top_[v] = {v, 0};
    base_[v] = v;
    first_leaf_[v] = last_leaf_[v] = v;
  }
  free_slots_.reserve(vertex_count);
  for (std::size_t slot = 2 * vertex_count; slot > vertex_count; --slot) {
    free_slots_.push_back(static_cast<NodeId>(slot - 1));
  }
}

NodeId BlossomForest::make_blossom(const std::vector<NodeId>& children,
                                   const std::vector<CycleEdge>& edges) {
  for (NodeId child : children) {
    YOKE_DCHECK(pending2_[child] == 0, "make_blossom: a child's pending dual was not written");
  }
  const NodeId b = free_slots_.back();
  free_slots_.pop_back();
  children_[b - vertex_count_] = children;
  edges_[b - vertex_count_] = edges;
  parent_[b] = kNoNode;
  base_[b] = base_[children.front()];
  dual2_[b] = 0;
  size_[b] = 0;
  for (std::size_t i = 0; i < children.size(); ++i) {
    parent_[children[i]] = b;
    size_[b] += size_[children[i]];
    if (i + 1 < children.size()) next_leaf_[last_leaf_[children[i]]] = first_leaf_[children[i + 1]];
  }
  first_leaf_[b] = first_leaf_[children.front()];
  last_leaf_[b] = last_leaf_[children.back()];
  return b;
}

void BlossomForest::dissolve(NodeId b) {
  YOKE_DCHECK(pending2_[b] == 0, "dissolve: the blossom's pending dual was not written");
  for (NodeId child : children_[b - vertex_count_]) parent_[child] = kNoNode;
  free_slot(b);
}

void BlossomForest::free_slot(NodeId b) {
  clear_pending(b);  // passed on to the children by dissolve_path, or never owed
  children_[b - vertex_count_].clear();
  edges_[b - vertex_count_].clear();
  dual2_[b] = 0;
  base_[b] = kNoVertex;
  free_slots_.push_back(b);
  // Caches naming b are stale from now on. After 2^32 frees of one slot a stale version could
  // match again: start every cache afresh then (a vertex's own version never moves).
  if (++version_[b] == 0) reset_top_caches();
}

void BlossomForest::reset_top_caches() {
  for (Vertex v = 0; v < vertex_count_; ++v) top_[v] = {v, 0};
  reset_shortcuts();
}

void BlossomForest::reset_shortcuts() {
  node_top_.resize(2 * vertex_count_);
  for (NodeId node = 0; node < 2 * vertex_count_; ++node) node_top_[node] = {node, 0};
}

void BlossomForest::dissolve_unpriced_nest(NodeId b) {
  YOKE_DCHECK(pending2_[b] == 0, "dissolve_unpriced_nest: the pending dual was not written");
  // Slots are freed in the order of dissolve() called top-down with a stack, so slot ids (and
  // with them every later choice) are the same as that way gives.
  nest_.assign(1, b);
  while (!nest_.empty()) {
    const NodeId x = nest_.back();
    nest_.pop_back();
    for (NodeId child : children_[x - vertex_count_]) {
      parent_[child] = kNoNode;
      if (!is_vertex(child) && dual2_[child] == 0) {
        nest_.push_back(child);  // its vertices get their top when its kept descendants do
      } else {
        settle_top(child);
      }
    }
    free_slot(x);
  }
}

std::size_t BlossomForest::dissolve_path(NodeId lowest, std::vector<Weight>& vertex_dual2,
                                         std::vector<Vertex>& bases) {
  path_.clear();
  for (NodeId node = lowest; node != kNoNode; node = parent_[node]) path_.push_back(node);
  // Walk down from the top. A child leaving the path receives the pushes of all dissolved
  // blossoms above it at once: a small child into its vertices' duals, a large blossom as a
  // pending dual that the next search to label it writes while it passes over its vertices
  // anyway (a search that re-forms the region the dissolution opened visits each vertex once,
  // not twice). Small children are pushed at once because a debt costs every read of a dual a
  // look-up while it is out. The top node may owe a pending dual of its own from an earlier
  // dissolution: its children inherit it. Owing children are left to the lazy top() repair (a
  // freed slot's caches are stale by version).
  Weight pushed = pending2_[path_.back()];
  clear_pending(path_.back());  // passed on to the children below
  std::size_t moved = 0;
  for (std::size_t level = path_.size(); level-- > 0;) {
    const NodeId b = path_[level];
    const NodeId next = level > 0 ? path_[level - 1] : kNoNode;
    pushed += dual2_[b] / 2;  // z2 is even: blossom duals move in steps of 2
    bases.push_back(base_[b]);
    for (NodeId child : children_[b - vertex_count_]) {
      parent_[child] = kNoNode;
      if (child == next || pushed == 0) continue;
      if (size_[child] < kOwedFromSize) {
        const std::uint32_t version = version_[child];
        for_each_vertex(child, [&](Vertex x) {
          vertex_dual2[x] += pushed;
          top_[x] = {child, version};
        });
        moved += size_[child];
      } else {
        pending2_[child] = pushed;  // a child was inside a blossom: it owed nothing
        ++owing_;
        pending_nodes_.push_back(child);
      }
    }
    free_slot(b);
  }
  return moved;
}

std::size_t BlossomForest::flush_pending(std::vector<Weight>& vertex_dual2) {
  std::size_t written = 0;
  for (NodeId node : pending_nodes_) {
    const Weight owed = pending2_[node];
    if (owed == 0) continue;  // written by a search, or passed on by a later dissolution
    YOKE_DCHECK(parent_[node] == kNoNode, "flush_pending: a pending dual below the top level");
    for_each_vertex(node, [&](Vertex x) { vertex_dual2[x] += owed; });
    written += size_[node];
    pending2_[node] = 0;
  }
  pending_nodes_.clear();
  owing_ = 0;
  return written;
}

void BlossomForest::grow(std::size_t vertex_count) {
  const std::size_t old_n = vertex_count_;
  if (vertex_count <= old_n) return;
  const std::size_t shift = vertex_count - old_n;
  auto moved = [&](NodeId id) {
    return id == kNoNode || id < old_n ? id : static_cast<NodeId>(id + shift);
  };
  auto remap_nodes = [&](auto& per_node, auto fill, bool values_are_nodes) {
    std::remove_reference_t<decltype(per_node)> grown(2 * vertex_count, fill);
    for (std::size_t id = 0; id < 2 * old_n; ++id) {
      auto value = per_node[id];
      if constexpr (std::is_same_v<decltype(value), NodeId>) {
        if (values_are_nodes) value = moved(value);
      }
      grown[moved(static_cast<NodeId>(id))] = value;
    }
    per_node = std::move(grown);
  };
  remap_nodes(parent_, kNoNode, true);
  remap_nodes(base_, kNoVertex, false);
  remap_nodes(dual2_, Weight{0}, false);
  remap_nodes(pending2_, Weight{0}, false);
  for (NodeId& node : pending_nodes_) node = moved(node);
  remap_nodes(first_leaf_, kNoVertex, false);
  remap_nodes(last_leaf_, kNoVertex, false);
  remap_nodes(size_, std::uint32_t{1}, false);
  remap_nodes(version_, std::uint32_t{0}, false);
  for (TopCache& t : top_) t.node = moved(t.node);
  top_.resize(vertex_count);
  next_leaf_.resize(vertex_count, kNoVertex);
  for (std::size_t v = old_n; v < vertex_count; ++v) {
    top_[v] = {static_cast<Vertex>(v), 0};
    base_[v] = first_leaf_[v] = last_leaf_[v] = static_cast<Vertex>(v);
  }
  for (auto& kids : children_) {
    for (NodeId& child : kids) child = moved(child);
  }
  children_.resize(vertex_count);
  edges_.resize(vertex_count);
  // New slots go below the old free ones, lowest nearest the top, so slots keep being handed
  // out lowest first among the new ones.
  std::vector<NodeId> free_slots;
  free_slots.reserve(vertex_count);
  for (std::size_t slot = 2 * vertex_count; slot > vertex_count + old_n; --slot) {
    free_slots.push_back(static_cast<NodeId>(slot - 1));
  }
  for (NodeId slot : free_slots_) free_slots.push_back(moved(slot));
  free_slots_ = std::move(free_slots);
  vertex_count_ = vertex_count;
  reset_shortcuts();  // a cache: started afresh rather than renumbered
}

NodeId BlossomForest::child_containing(NodeId b, Vertex v) const {
  NodeId node = v;
  while (parent_[node] != b) node = parent_[node];
  return node;
}

void BlossomForest::make_base(NodeId b, Vertex v, Mates& mate) {
  if (is_vertex(b)) return;  // a vertex is its own base
  base_work_.clear();
  base_work_.push_back({b, v, kNoNode});
  while (!base_work_.empty()) {
    const BaseWork work = base_work_.back();
    base_work_.pop_back();
    if (is_vertex(work.blossom)) continue;
    NodeId entry = work.entry;
    if (entry == kNoNode) {
      // Walk up once from the vertex and queue every blossom on the way with its entry child,
      // so deep nests cost O(depth) in total, not O(depth^2).
      NodeId below = work.vertex;
      while (parent_[below] != work.blossom) {
        const NodeId above = parent_[below];
        base_work_.push_back({above, work.vertex, below});
        below = above;
      }
      entry = below;
    }
    auto& kids = children_[work.blossom - vertex_count_];
    auto& cycle = edges_[work.blossom - vertex_count_];
    const std::size_t k = kids.size();
    const std::size_t i = static_cast<std::size_t>(std::find(kids.begin(), kids.end(), entry) - kids.begin());
    // Children are matched in pairs (1,2), (3,4), ... around the cycle from the base child.
    // Walking from the entry child to the old base along the even side, the pairing shifts by
    // one: the edges that become matched are every other edge of that path.
    auto match_edge = [&](std::size_t j) {
      const CycleEdge e = cycle[j];
      mate.set(e.from, e.to);
      mate.set(e.to, e.from);
      base_work_.push_back({kids[j], e.from, kNoNode});
      base_work_.push_back({kids[(j + 1) % k], e.to, kNoNode});
    };
    if (i % 2 == 1) {
      for (std::size_t j = i + 1; j < k; j += 2) match_edge(j);
    } else {
      for (std::size_t j = i; j >= 2; j -= 2) match_edge(j - 2);
    }
    std::rotate(kids.begin(), kids.begin() + static_cast<std::ptrdiff_t>(i), kids.end());
    std::rotate(cycle.begin(), cycle.begin() + static_cast<std::ptrdiff_t>(i), cycle.end());
    base_[work.blossom] = work.vertex;
  }
}

std::vector<NodeId> BlossomForest::live_blossoms() const {
  std::vector<NodeId> live;
  for (std::size_t slot = vertex_count_; slot < 2 * vertex_count_; ++slot) {
    if (!children_[slot - vertex_count_].empty()) live.push_back(static_cast<NodeId>(slot));
  }
  return live;
}

std::vector<CertificateBlossom> BlossomForest::certificate_blossoms(
    const std::vector<Vertex>& vertex_id, std::size_t vertex_ids) const {
  auto name = [&](Vertex v) { return vertex_id.empty() ? v : vertex_id[v]; };
  const std::vector<NodeId> live = live_blossoms();
  std::vector<NodeId> index_of(vertex_count_, kNoNode);  // blossom slot - n -> list index
  for (std::size_t k = 0; k < live.size(); ++k) index_of[live[k] - vertex_count_] = static_cast<NodeId>(k);
  std::vector<CertificateBlossom> out;
  out.reserve(live.size());
  for (NodeId b : live) {
    CertificateBlossom blossom;
    blossom.dual2 = dual2_[b];
    blossom.base = name(base_[b]);
    for (NodeId child : children(b)) {
      blossom.children.push_back(is_vertex(child) ? name(child)
                                                  : static_cast<NodeId>(vertex_ids + index_of[child - vertex_count_]));
    }
    out.push_back(std::move(blossom));
  }
  return out;
}

void BlossomForest::save(ByteWriter& out) const {
  YOKE_DCHECK(!has_pending(), "BlossomForest::save: pending duals not flushed");
  out.put<std::uint64_t>(vertex_count_);
  out.put_vector(parent_);
  out.put_vector(base_);
  out.put_vector(dual2_);
  out.put_vector(first_leaf_);
  out.put_vector(last_leaf_);
  out.put_vector(next_leaf_);
  out.put_vector(size_);
  for (std::size_t slot = 0; slot < vertex_count_; ++slot) {
    out.put_vector(children_[slot]);
    out.put_vector(edges_[slot]);
  }
  out.put_vector(free_slots_);
}

BlossomForest BlossomForest::load(ByteReader& in) {
  const auto n = in.get<std::uint64_t>();
  if (n >= kMaxVertices) ByteReader::fail("too many vertices in the forest");
  BlossomForest forest(0);
  forest.vertex_count_ = n;
  auto per_node = [&](auto& values) {
    values = in.get_vector<typename std::remove_reference_t<decltype(values)>::value_type>(2 * n);
    if (values.size() != 2 * n) ByteReader::fail("a forest array has the wrong length");
  };
  per_node(forest.parent_);
  per_node(forest.base_);
  per_node(forest.dual2_);
  forest.pending2_.assign(2 * n, 0);
  per_node(forest.first_leaf_);
  per_node(forest.last_leaf_);
  forest.next_leaf_ = in.get_vector<Vertex>(n);
  if (forest.next_leaf_.size() != n) ByteReader::fail("the leaf list has the wrong length");
  per_node(forest.size_);
  forest.children_.resize(n);
  forest.edges_.resize(n);
  for (std::size_t slot = 0; slot < n; ++slot) {
    forest.children_[slot] = in.get_vector<NodeId>(2 * n);
    forest.edges_[slot] = in.get_vector<CycleEdge>(2 * n);
  }
  forest.free_slots_ = in.get_vector<NodeId>(n);
  forest.top_.resize(n);
  forest.version_.assign(2 * n, 0);
  forest.reset_top_caches();  // a cache: any ancestor-or-self will do
  forest.check_loaded();
  return forest;
}

void BlossomForest::check_loaded() const {
  const std::size_t n = vertex_count_;
  auto bad = [](const std::string& why) { ByteReader::fail("blossom forest: " + why); };
  for (std::size_t node = 0; node < 2 * n; ++node) {
    const NodeId parent = parent_[node];
    if (parent != kNoNode && (parent < n || parent >= 2 * n || !is_live_blossom(parent))) bad("a parent is not a blossom");
    if (node < n && (size_[node] != 1 || first_leaf_[node] != node || last_leaf_[node] != node)) bad("a vertex is not its own leaf run");
  }
  std::vector<std::uint8_t> slot_free(n, 0);
  for (NodeId slot : free_slots_) {
    if (slot < n || slot >= 2 * n || is_live_blossom(slot) || slot_free[slot - n] != 0) bad("the free list is wrong");
    slot_free[slot - n] = 1;
  }
  for (std::size_t slot = 0; slot < n; ++slot) {
    const auto b = static_cast<NodeId>(n + slot);
    const auto& kids = children_[slot];
    if (kids.empty()) {
      if (slot_free[slot] == 0) bad("an unused slot is not free");
      continue;
    }
    if (kids.size() < 3 || kids.size() % 2 == 0 || edges_[slot].size() != kids.size()) bad("a blossom is not an odd cycle");
    std::uint64_t total = 0;
    for (NodeId child : kids) {
      if (child >= 2 * n || parent_[child] != b) bad("a child does not name its blossom");
      total += size_[child];
    }
    // Each blossom is larger than each child: following parents always grows, so no cycle.
    if (total != size_[b]) bad("a blossom's size is not the sum of its children's");
    // (make_base rotates the children, not the leaf run, so the run need not start at the
    // base child; its length is checked below for top-level blossoms.)
    if (base_[b] >= n || first_leaf_[b] >= n || last_leaf_[b] >= n) bad("a blossom's leaf run or base is wrong");
    for (const CycleEdge& e : edges_[slot]) {
      if (e.from >= n || e.to >= n) bad("a cycle edge names a missing vertex");
    }
  }
  // Every top-level node's leaf run holds exactly its size, ending at its last leaf.
  for (std::size_t node = 0; node < 2 * n; ++node) {
    if (parent_[node] != kNoNode || (node >= n && !is_live_blossom(static_cast<NodeId>(node)))) continue;
    Vertex v = first_leaf_[node];
    for (std::uint32_t k = 1; k < size_[node]; ++k) {
      if (v >= n || v == last_leaf_[node]) bad("a leaf run is short");
      v = next_leaf_[v];
    }
    if (v != last_leaf_[node]) bad("a leaf run does not end at its last leaf");
  }
}

}  // namespace yoke
