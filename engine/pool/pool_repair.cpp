// Event-level repair (docs/mathematics.md §5). Every event leaves the duals feasible, matched and
// blossom-cycle edges tight and blossoms full; the only condition it may break is "an exposed
// vertex has dual 0", at vertices it queues as roots for the search that ends the commit.
#include <algorithm>
#include <utility>

#include "pool/pool_state.h"

namespace yoke {
namespace {

class EventRepair {
 public:
  explicit EventRepair(PoolState& pool)
      : pool_(pool),
        graph_(pool.graph),
        mate_(pool.matching.mate),
        dual2_(pool.matching.dual2),
        forest_(pool.matching.forest),
        holds_(pool.holds) {}

  void apply(const Event& event) {
    const VertexKey u = event.u;
    const VertexKey v = event.v;
    switch (event.kind) {
      case EventKind::add_vertex:
        ensure_vertex(u);
        break;
      case EventKind::set_edge:
        if (holds_.held(u) || holds_.held(v)) {
          ensure_vertex(u);
          ensure_vertex(v);
          if (holds_.is_pair(u, v)) touch_hold(u, v);
          holds_.put_aside(u, v, event.w);
        } else {
          set_edge(ensure_vertex(u), ensure_vertex(v), event.w);
        }
        break;
      case EventKind::unset_edge:
        if (holds_.is_pair(u, v)) {
          end_hold(u, v, /*keep_edge=*/false);
        } else if (holds_.aside_weight(u, v)) {
          holds_.erase_aside(u, v);
        } else {
          unset_edge(graph_.find(u), graph_.find(v));
        }
        break;
      case EventKind::remove_vertex:
        depart(u);
        break;
      case EventKind::hold_pair:
        hold(u, v);
        break;
      case EventKind::release_pair:
        end_hold(u, v, /*keep_edge=*/true);
        break;
    }
    if (pool_.uses_phantom) sync_phantom();
  }

  // φ is present exactly while the vertex count is odd and nothing is held (a held vertex is
  // in no pair the optimisation may form, φ's included).
  void sync_phantom() {
    const bool wanted = holds_.empty() && graph_.vertex_count() % 2 == 1;
    if (wanted == (pool_.phantom != kNoVertex)) return;
    if (wanted) {
      enter_phantom();
    } else {
      leave_phantom();
    }
  }

  // Moves the churn bonus between pairs: `delta` is +bonus for a pair that now carries it and
  // -bonus for one that no longer does. Repaired as any other weight change.
  void shift_bonus(Vertex a, Vertex b, Weight delta) {
    const EdgeIndex e = graph_.find_edge(a, b);
    if (e == kNoEdge) return;  // the pair broke because its edge left
    reweigh(a, b, e, graph_.graph().edge(e).w + delta);
  }

 private:
  // Holding takes both vertices out of the optimisation: their edges go aside, each removed
  // from the graph as an unset would remove it, so the rest is repaired around them.
  void hold(VertexKey u, VertexKey v) {
    touch_hold(u, v);
    for (const VertexKey key : {u, v}) {
      const Vertex x = graph_.find(key);
      while (!graph_.graph().incident(x).empty()) {
        const Incidence inc = graph_.graph().incident(x).back();
        holds_.put_aside(key, graph_.key(inc.other), pool_.own_weight(x, inc.other, inc.edge));
        unset_edge(x, inc.other);
      }
    }
    holds_.hold(u, v);
  }

  // The pair goes back to the optimisation: every edge aside at either end whose other end is
  // not held returns to the graph, in key order.
  void end_hold(VertexKey u, VertexKey v, bool keep_edge) {
    touch_hold(u, v);
    holds_.release(u, v);
    if (!keep_edge) holds_.erase_aside(u, v);
    return_aside(u);
    return_aside(v);
  }

  // A departure ends its vertex's hold: the edges aside at it leave with it, and its partner's
  // go back to the graph (not through end_hold, which would put the departing vertex's edges
  // back only for remove_vertex to take them out again).
  void depart(VertexKey u) {
    const auto partner = holds_.partner(u);
    if (partner) {
      touch_hold(u, *partner);
      holds_.release(u, *partner);
    }
    for (const VertexKey other : holds_.aside_at(u)) holds_.erase_aside(u, other);
    if (partner) return_aside(*partner);
    remove_vertex(graph_.find(u));
  }

  void return_aside(VertexKey key) {
    for (const VertexKey other : holds_.aside_at(key)) {
      if (holds_.held(other)) continue;
      const Weight w = *holds_.aside_weight(key, other);
      holds_.erase_aside(key, other);
      set_edge(graph_.find(key), graph_.find(other), w);
    }
  }

  // φ enters exposed at the least price that keeps its edges feasible: u(φ) = K - min u(v),
  // tight at the vertex of least price. A positive price makes it a root.
  void enter_phantom() {
    const Vertex phi = graph_.reserve_slot();
    if (graph_.capacity() != mate_.size()) pool_.fit_capacity();
    const PhantomPrices::Least least =
        pool_.prices.least([&](Vertex v) { return dual(v); }, [](Vertex) { return false; });
    dual2_[phi] = std::max<Weight>(0, 2 * pool_.weight_offset - least.price2);
    pool_.phantom = phi;
    pool_.phantom_slots.push_back(phi);
    pool_.search->set_phantom(phi, &pool_.prices);
    if (dual2_[phi] > 0) queue_root(phi);
  }

  // As a departure: the blossoms holding φ dissolve, its mate becomes a root.
  void leave_phantom() {
    const Vertex phi = pool_.phantom;
    if (forest_.parent(phi) != kNoNode) dissolve_from(forest_.parent(phi));
    if (mate_[phi] != kNoVertex) unmatch(phi, mate_[phi]);
    dual2_[phi] = 0;
    pool_.phantom = kNoVertex;
    graph_.release_reserved(phi);
    pool_.search->set_phantom(kNoVertex, &pool_.prices);
  }

  // Doubled slack of φ's edge to top-level vertex v (no blossom holds both).
  Weight phantom_slack2(Vertex v) const {
    return dual(v) + dual(pool_.phantom) - 2 * pool_.weight_offset;
  }

  void touch_hold(VertexKey u, VertexKey v) {
    const HeldPairs::KeyPair pair = HeldPairs::ordered(u, v);
    const bool was = holds_.is_pair(u, v);
    const Weight w = was ? *holds_.aside_weight(u, v) : 0;
    auto [it, inserted] = pool_.holds_touched.try_emplace(pair, PoolState::HoldTouch{was, w, 0});
    it->second.cause = pool_.current_cause;
  }

  struct Common {
    NodeId lowest;  // the smallest blossom holding both ends, kNoNode when none does
    Weight z2;      // doubled duals of every blossom holding both ends
  };

  Vertex ensure_vertex(VertexKey key) {
    Vertex v = graph_.find(key);
    if (v != kNoVertex) return v;
    v = graph_.add_vertex(key);
    if (graph_.capacity() != mate_.size()) pool_.fit_capacity();
    dual2_[v] = 0;  // a fresh slot: exposed, top level, dual 0 (a freed slot was left so)
    if (pool_.uses_phantom) {
      // φ's edge to the newcomer must be feasible: it starts at the price that makes it tight.
      if (pool_.phantom != kNoVertex && phantom_slack2(v) < 0) {
        dual2_[v] = -phantom_slack2(v);
        queue_root(v);
      }
      pool_.prices.join(v, dual2_[v]);
    }
    return v;
  }

  void set_edge(Vertex a, Vertex b, Weight w) {
    const EdgeIndex e = graph_.find_edge(a, b);
    if (e == kNoEdge) {
      restore_edge(a, b, graph_.add_edge(a, b, w), /*tight_before=*/false);
      return;
    }
    const Weight carried = w + pool_.bonus_on(a, b);  // a standing pair keeps its bonus
    const Weight before = graph_.graph().edge(e).w;
    if (before == carried) return;
    remember_weight_before(a, b, before);
    reweigh(a, b, e, carried);
  }

  void reweigh(Vertex a, Vertex b, EdgeIndex e, Weight w) {
    const bool tight_before = slack2(a, b, e) == 0;
    graph_.set_weight(e, w);
    restore_edge(a, b, e, tight_before);
  }

  // After edge e = {a, b} got its weight: keep the blossom that relied on it only if it still
  // can, then make the edge feasible again and its matched state consistent with its slack.
  void restore_edge(Vertex a, Vertex b, EdgeIndex e, bool tight_before) {
    dissolve_if_cycle_edge(a, b, tight_before);
    const Weight slack = slack2(a, b, e);
    if (slack < 0) {
      if (mate_[a] == b || (!shift_along_matched_edge(a, b, -slack) &&
                            !shift_along_matched_edge(b, a, -slack))) {
        lift(a, b, e);
      }
    } else if (slack > 0 && mate_[a] == b) {
      if (!lower_ends(a, b, slack)) unmatch(a, b);
    }
  }

  // Fast paths that keep the matching: most small weight changes are absorbed by moving dual
  // between the ends of one matched edge, at the cost of a look at their edges.
  //
  // A matched edge {a, b} has gained `excess` slack: lower the duals of its ends by that much,
  // when their other edges have room. Both must be plain top-level vertices (a blossom's cycle
  // edges fix its vertices' duals).
  bool lower_ends(Vertex a, Vertex b, Weight excess) {
    const Weight room_a = room(a, b);
    if (room_a >= excess) {
      dual2_[a] -= excess;
      offer_price(a);
      return true;
    }
    const Weight room_b = room(b, a);
    if (room_a + room_b < excess) return false;
    dual2_[a] -= room_a;
    dual2_[b] -= excess - room_a;
    offer_price(a);
    offer_price(b);
    return true;
  }

  // Unmatched edge {x, y} lacks `deficit` slack: raise x's dual and lower its mate's by the same
  // amount, which keeps their matched edge tight, when the mate's other edges have room.
  bool shift_along_matched_edge(Vertex x, Vertex y, Weight deficit) {
    const Vertex m = mate_[x];
    if (m == kNoVertex || m == y || !is_plain_top(x) || room(m, x) < deficit) return false;
    dual2_[x] += deficit;
    dual2_[m] -= deficit;
    offer_price(m);
    return true;
  }

  // A price that fell is offered to φ's heap (PhantomPrices' invariant).
  void offer_price(Vertex v) {
    if (pool_.uses_phantom) pool_.prices.offer(v, dual2_[v]);
  }

  bool is_plain_top(Vertex v) const { return forest_.parent(v) == kNoNode; }

  // How far v's dual can fall with every edge but {v, skip} staying feasible: 0 unless v is a
  // plain top-level vertex. O(degree of v).
  Weight room(Vertex v, Vertex skip) {
    if (!is_plain_top(v)) return 0;
    const Vertex phi = pool_.phantom;
    if (v == phi) return 0;  // φ's edges are to every vertex: no room is looked for
    Weight least = dual2_[v];
    if (phi != kNoVertex && skip != phi) {
      least = std::min(least, phantom_slack2(v));
      if (least <= 0) return 0;
    }
    for (const Incidence& inc : graph_.graph().incident(v)) {
      if (inc.other == skip) continue;
      // v is in no blossom, so no blossom dual counts on its edges.
      least = std::min(least, dual2_[v] + dual(inc.other) - 2 * (inc.w + pool_.weight_offset));
      if (least <= 0) return 0;
    }
    pool_.stats.vertices_touched += 1;
    return least;
  }

  void unset_edge(Vertex a, Vertex b) {
    const EdgeIndex e = graph_.find_edge(a, b);
    remember_weight_before(a, b, graph_.graph().edge(e).w);
    dissolve_if_cycle_edge(a, b, slack2(a, b, e) == 0);
    if (mate_[a] == b) unmatch(a, b);
    if (pool_.bonus_on(a, b) != 0) drop_bonus(a);  // the edge takes its bonus with it
    graph_.remove_edge(e);
  }

  void remove_vertex(Vertex v) {
    if (forest_.parent(v) != kNoNode) dissolve_from(forest_.parent(v));
    if (mate_[v] != kNoVertex) unmatch(v, mate_[v]);
    // v is a top-level vertex now: none of its edges is on a blossom's cycle.
    while (!graph_.graph().incident(v).empty()) {
      const Incidence inc = graph_.graph().incident(v).back();
      remember_weight_before(v, inc.other, inc.w);
      graph_.remove_edge(inc.edge);
    }
    dual2_[v] = 0;
    drop_bonus(v);
    if (pool_.uses_phantom) pool_.prices.leave(v);
    graph_.remove_vertex(v);
    ++pool_.stats.vertices_touched;
  }

  // A blossom whose cycle uses {a, b} keeps its structure only while that edge stays tight:
  // dissolve it (and the blossoms around it) before the edge changes its slack.
  void dissolve_if_cycle_edge(Vertex a, Vertex b, bool tight_before) {
    if (!tight_before) return;
    const Common common = common_blossom(a, b);
    if (common.lowest == kNoNode) return;
    // A matched edge inside a blossom is on the cycle of the smallest blossom holding both ends.
    if (mate_[a] == b || is_cycle_edge(common.lowest, a, b)) dissolve_from(common.lowest);
  }

  bool is_cycle_edge(NodeId blossom, Vertex a, Vertex b) const {
    for (const CycleEdge& edge : forest_.cycle_edges(blossom)) {
      if ((edge.from == a && edge.to == b) || (edge.from == b && edge.to == a)) return true;
    }
    return false;
  }

  // Edge {a, b} has negative slack: raise the dual of one end until it is tight. The end must
  // be a top-level vertex, so its blossoms are dissolved first; its matched edge, if not {a, b},
  // loses tightness and is given up.
  void lift(Vertex a, Vertex b, EdgeIndex e) {
    const Vertex x = lift_cost(b) < lift_cost(a) ? b : a;
    const Vertex y = x == a ? b : a;
    if (forest_.parent(x) != kNoNode) dissolve_from(forest_.parent(x));
    const Weight slack = slack2(x, y, e);
    if (slack < 0) dual2_[x] -= slack;
    const Vertex m = mate_[x];
    if (m != kNoVertex && (m != y || slack > 0)) unmatch(x, m);
    queue_root(x);
  }

  // Lifting a top-level vertex touches nothing else; lifting inside a blossom dissolves it.
  std::size_t lift_cost(Vertex v) const {
    const NodeId top = forest_.top(v);
    return forest_.is_vertex(top) ? (mate_[v] == kNoVertex ? 0 : 1) : 1 + forest_.size(top);
  }

  // Counts the vertices whose dual was written as touched (RepairStats counts vertex visits):
  // a vertex child's at once; a blossom child's dual is owed (BlossomForest::pending_dual2) and
  // written by the search that labels it, on the pass over its vertices it makes anyway, or
  // by flush_pending_duals at the end of the repair, which counts them. An unpriced blossom's
  // vertices are owed nothing.
  void dissolve_from(NodeId lowest) {
    bases_.clear();
    const std::size_t owing_before = forest_.pending_count();
    const std::size_t pushed = forest_.dissolve_path(lowest, dual2_, bases_);
    pool_.stats.blossoms_owing += forest_.pending_count() - owing_before;
    pool_.stats.vertices_touched += pushed;
    pool_.stats.vertices_dissolved += pushed;
    pool_.stats.blossoms_dissolved += bases_.size();
    for (Vertex base : bases_) recheck_matched_edge(base);
  }

  // After a dissolution the base's matched edge may have gained slack: then it is no longer
  // worth keeping. An exposed base may have gained dual: then it is a root.
  void recheck_matched_edge(Vertex base) {
    const Vertex m = mate_[base];
    if (m == kNoVertex) {
      queue_root(base);
      return;
    }
    // No blossom holds both ends now; φ's edges are implicit.
    const Weight slack = base == pool_.phantom || m == pool_.phantom
                             ? phantom_slack2(base == pool_.phantom ? m : base)
                             : slack2(base, m, graph_.find_edge(base, m));
    if (slack > 0) unmatch(base, m);
  }

  void unmatch(Vertex a, Vertex b) {
    mate_.set(a, kNoVertex);
    mate_.set(b, kNoVertex);
    queue_root(a);
    queue_root(b);
  }

  // A pair whose edge leaves loses its bonus: an edge set again later in the batch is new.
  void drop_bonus(Vertex v) {
    if (pool_.churn_bonus == 0 || pool_.bonus_mate[v] == kNoVertex) return;
    pool_.bonus_mate[pool_.bonus_mate[v]] = kNoVertex;
    pool_.bonus_mate[v] = kNoVertex;
  }

  void queue_root(Vertex v) { pool_.root_candidates.push_back({v, pool_.current_cause}); }

  // The weight the outside world gave the pair, without the bonus it carried in the graph.
  void remember_weight_before(Vertex a, Vertex b, Weight w) {
    if (mate_.before(a) == b) pool_.weight_before.try_emplace(slot_pair(a, b), w - pool_.bonus_on(a, b));
  }

  Weight slack2(Vertex a, Vertex b, EdgeIndex e) {
    return dual(a) + dual(b) + common_blossom(a, b).z2 - pool_.weight2(e);
  }

  // v's doubled dual with what a dissolution still owes it (BlossomForest::pending_dual2). The
  // duals this repair writes are of plain top-level vertices, which are never owed anything.
  Weight dual(Vertex v) const { return vertex_dual2(pool_, v); }

  // O(depth of a and b in their blossom).
  Common common_blossom(Vertex a, Vertex b) {
    if (forest_.top(a) != forest_.top(b)) return {kNoNode, 0};
    if (++pool_.node_stamp == 0) {
      std::fill(pool_.node_mark.begin(), pool_.node_mark.end(), 0);
      pool_.node_stamp = 1;
    }
    for (NodeId node = forest_.parent(a); node != kNoNode; node = forest_.parent(node)) {
      pool_.node_mark[node] = pool_.node_stamp;
    }
    NodeId lowest = forest_.parent(b);
    while (pool_.node_mark[lowest] != pool_.node_stamp) lowest = forest_.parent(lowest);
    Weight z2 = 0;
    for (NodeId node = lowest; node != kNoNode; node = forest_.parent(node)) z2 += forest_.dual2(node);
    return {lowest, z2};
  }

  PoolState& pool_;
  PoolGraph& graph_;
  Mates& mate_;
  std::vector<Weight>& dual2_;
  BlossomForest& forest_;
  HeldPairs& holds_;
  std::vector<Vertex> bases_;
};

}  // namespace

void load_event(PoolState& pool, const Event& event) {
  PoolGraph& graph = pool.graph;
  auto ensure_vertex = [&](VertexKey key) {
    Vertex v = graph.find(key);
    if (v != kNoVertex) return v;
    v = graph.add_vertex(key);
    if (graph.capacity() != pool.matching.mate.size()) pool.fit_capacity();
    return v;
  };
  switch (event.kind) {
    case EventKind::add_vertex:
      ensure_vertex(event.u);
      break;
    case EventKind::set_edge: {
      const Vertex a = ensure_vertex(event.u);
      const Vertex b = ensure_vertex(event.v);
      const EdgeIndex e = graph.find_edge(a, b);
      if (e == kNoEdge) {
        graph.add_edge(a, b, event.w);
      } else {
        graph.set_weight(e, event.w);
      }
      break;
    }
    case EventKind::unset_edge:
      graph.remove_edge(graph.find_edge(graph.find(event.u), graph.find(event.v)));
      break;
    case EventKind::remove_vertex: {
      const Vertex v = graph.find(event.u);
      while (!graph.graph().incident(v).empty()) graph.remove_edge(graph.graph().incident(v).back().edge);
      graph.remove_vertex(v);
      break;
    }    case EventKind::hold_pair:
    case EventKind::release_pair:
      break;  // never here: Pool::commit repairs batches with holds event by event
  }
  ++pool.stats.events;
}

void sync_phantom(PoolState& pool) {
  if (pool.uses_phantom) EventRepair(pool).sync_phantom();
}

void apply_event(PoolState& pool, const Event& event) {
  EventRepair(pool).apply(event);
  ++pool.stats.events;
}

Weight vertex_dual2(const PoolState& pool, Vertex v) {
  const BlossomForest& forest = pool.matching.forest;
  const Weight owed = forest.has_pending() ? forest.owed_dual2(v) : 0;
  return pool.matching.dual2[v] + owed;
}

std::size_t flush_pending_duals(PoolState& pool) {
  const std::size_t written = pool.matching.forest.flush_pending(pool.matching.dual2);
  pool.stats.vertices_touched += written;
  pool.stats.vertices_dissolved += written;
  return written;
}

void search_from_roots(PoolState& pool) {
  using Root = PoolState::RootCandidate;
  std::vector<Root>& roots = pool.root_candidates;
  Mates& mate = pool.matching.mate;
  // A vertex queued by several events goes back to the first of them.
  std::sort(roots.begin(), roots.end(), [](const Root& x, const Root& y) {
    return x.vertex != y.vertex ? x.vertex < y.vertex : x.cause < y.cause;
  });
  roots.erase(std::unique(roots.begin(), roots.end(),
                          [](const Root& x, const Root& y) { return x.vertex == y.vertex; }),
              roots.end());
  // Still a root: exposed with a positive dual (an earlier tree may have reached it since).
  const auto still_a_root = [&](Vertex v) {
    return mate[v] == kNoVertex && vertex_dual2(pool, v) != 0;
  };
  std::erase_if(roots, [&](const Root& root) {
    const bool present = pool.graph.alive(root.vertex) || root.vertex == pool.phantom;
    return !present || !still_a_root(root.vertex);
  });
  if (roots.empty()) return;
  pool.stats.roots += roots.size();

  AlternatingSearch& search = *pool.search;
  const SolveStats before = search.stats();
  if (pool.weight_offset != 0) {
    // All trees at once, in the modes with an offset: a vertex that every maximum matching
    // covers holds about half the offset in its price, so its tree cannot end at a price of 0,
    // only by meeting another exposed vertex. Grown alone, it must reach the other at the whole
    // distance between them; grown together, the two meet halfway, and a tree's region shrinks
    // with its radius (docs/mathematics.md §9). A run's roots must share a parity (the two
    // ends of a matched edge do: their doubled duals sum to an even doubled weight), so the
    // roots go in one run per parity.
    for (const Weight parity : {0, 1}) {
      bool any = false;
      for (const Root& root : roots) {
        const Vertex v = root.vertex;
        if (!still_a_root(v) || vertex_dual2(pool, v) % 2 != parity) continue;
        search.add_root(v, root.cause);
        any = true;
      }
      if (any) search.run();
    }
  } else {
    // One tree at a time: a tree that reaches a later root augments into it as into any
    // exposed vertex, and a lone tree never has to tell other trees about the vertices it
    // frees (and can stop queueing bounds past its latest end).
    for (const Root& root : roots) {
      const Vertex v = root.vertex;
      if (!still_a_root(v)) continue;
      search.add_root(v, root.cause);  // what the tree changes goes back to the event that queued v
      search.run();
    }
  }
  const SolveStats& after = search.stats();
  pool.stats.searches += after.searches - before.searches;
  pool.stats.augmentations += after.augmentations - before.augmentations;
  pool.stats.vertices_touched += after.scans - before.scans;
  pool.stats.blossoms_formed += after.blossoms_formed - before.blossoms_formed;
  pool.stats.blossoms_expanded += after.blossoms_expanded - before.blossoms_expanded;
  pool.stats.dual_steps += after.dual_steps - before.dual_steps;
  pool.stats.last_level_scans += after.last_level_scans - before.last_level_scans;
  pool.stats.stale_bounds += after.stale_bounds - before.stale_bounds;
}

void settle_churn_bonus(PoolState& pool) {
  if (pool.churn_bonus == 0) return;
  Mates& mate = pool.matching.mate;
  std::vector<Vertex>& bonus_mate = pool.bonus_mate;
  const Weight bonus = pool.churn_bonus;
  pool.current_cause = kNoCause;  // the repair may only swap pairs of equal worth: no event did it
  mate.set_cause(kNoCause);
  EventRepair repair(pool);
  std::vector<std::pair<Vertex, Vertex>> lose;
  std::vector<std::pair<Vertex, Vertex>> gain;
  // Only vertices whose mate changed (the mate journal) can differ from their bonus pair. Each
  // pass moves the bonus from the pairs the matching no longer has to the pairs it has now, all
  // against the matching at the start of the pass; a move that breaks a pair is repaired by the
  // search. The matching is optimal for the moved bonus too (a pass after the first only follows
  // a tie), so the loop ends when a pass finds nothing to move, after one or two passes.
  for (;;) {
    lose.clear();
    gain.clear();
    for (std::size_t i = 0; i < mate.journal().size(); ++i) {
      const Vertex v = mate.journal()[i].vertex;
      const Vertex m = mate[v];
      const Vertex held = bonus_mate[v];
      if (held == m) continue;
      if (held != kNoVertex && v < held) lose.emplace_back(v, held);
      if (m != kNoVertex && v < m) gain.emplace_back(v, m);
    }
    if (lose.empty() && gain.empty()) return;
    for (const auto& [a, b] : lose) {
      bonus_mate[a] = bonus_mate[b] = kNoVertex;
      if (pool.graph.alive(a) && pool.graph.alive(b)) repair.shift_bonus(a, b, -bonus);
    }
    for (const auto& [a, b] : gain) {
      if (mate[a] != b) continue;  // broken by a move above: the next pass looks again
      bonus_mate[a] = b;
      bonus_mate[b] = a;
      repair.shift_bonus(a, b, bonus);
    }
    search_from_roots(pool);
  }
}

}  // namespace yoke
