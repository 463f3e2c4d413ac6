// What a pool holds between commits, shared by the files that implement Pool (pool.cpp,
// batch_checker.cpp, pool_repair.cpp, pool_diff.cpp, pool_explain.cpp, pool_limits.cpp,
// pool_snapshot.cpp). Not part of the public interface.
#pragma once

#include <algorithm>
#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <unordered_map>
#include <vector>

#include "pool/held_pairs.h"
#include "pool/pool_graph.h"
#include "solver/alternating_search.h"
#include "solver/matching_state.h"
#include "yoke/pool.h"

namespace yoke {

// Fills in the limits the caller left open and checks that the mode keeps them exact with the
// churn bonus on top of every weight; returns the weight offset of the mode. Throws InputError
// naming the bound that fails.
Weight resolve_limits(Mode mode, PoolLimits& limits, Weight churn_bonus);

struct PoolState {
  PoolState(Mode mode, PoolLimits limits, Weight churn_bonus);

  // Grows every per-vertex array to graph.capacity() after the graph gained slots. Blossom ids
  // change, so no node id may be held across this call.
  void fit_capacity();

  Weight weight2(EdgeIndex e) const { return 2 * (graph.graph().edge(e).w + weight_offset); }

  // The bonus edge {a, b} carries in the graph: churn_bonus when it is a pair of bonus_mate.
  Weight bonus_on(Vertex a, Vertex b) const {
    return churn_bonus != 0 && bonus_mate[a] == b ? churn_bonus : 0;
  }
  // The weight the outside world gave edge e = {a, b}: the graph's, less its bonus.
  Weight own_weight(Vertex a, Vertex b, EdgeIndex e) const {
    return graph.graph().edge(e).w - bonus_on(a, b);
  }

  const Mode mode;
  PoolLimits limits;
  const Weight churn_bonus;    // 0: no churn control
  const Weight weight_offset;  // added to every weight (max-cardinality and perfect modes)

  PoolGraph graph;
  MatchingState matching;                    // mate, doubled duals, blossom forest by slot
  // The pairs whose edges carry the churn bonus in the graph: the matching before the batch
  // during a commit, the matching itself between commits. Empty when churn_bonus is 0.
  std::vector<Vertex> bonus_mate;
  HeldPairs holds;  // pairs fixed by hold_pair, outside the optimisation
  // The phantom vertex (docs/mathematics.md §9): in max-cardinality and perfect pools (without
  // a churn bonus or held pairs), while the vertex count is odd, one keyless slot joined to
  // every vertex by an implicit edge of weight 0, so that the graph the search sees is even.
  bool uses_phantom;  // fixed at construction, or by a restored pool that held φ
  PhantomPrices prices;          // every vertex joined while uses_phantom, φ present or not
  Vertex phantom = kNoVertex;    // φ's slot while present
  std::vector<Vertex> phantom_slots;  // the slots φ held during the batch (the diff skips them)
  // The state with φ taken out, made by the first explanation or export after a commit and
  // dropped when the next batch stages: a search per commit, not per call (certified_state).
  mutable std::optional<MatchingState> without_phantom;
  bool is_phantom_slot(Vertex v) const {
    return std::find(phantom_slots.begin(), phantom_slots.end(), v) != phantom_slots.end();
  }
  std::unique_ptr<AlternatingSearch> search;  // one for the pool's life: stamps, no clearing
  std::vector<std::uint32_t> node_mark;      // scratch stamps per forest node
  std::uint32_t node_stamp = 0;

  Weight weight = 0;  // sum of the matched edges' weights
  std::size_t pairs = 0;
  std::uint64_t commits = 0;

  // Per commit.
  struct RootCandidate {
    Vertex vertex;
    EventCause cause;  // the event that queued it
  };
  std::vector<RootCandidate> root_candidates;  // may break "exposed => dual 0"; checked first
  EventCause current_cause = kNoCause;         // the event being applied
  // Edges matched before the batch whose weight the batch changed or that it removed: their
  // weight before the batch, by pair of slots (the diff reports it, the objective needs it).
  std::unordered_map<std::uint64_t, Weight> weight_before;
  // Held pairs the batch held, released or re-weighed: how they were before it.
  struct HoldTouch {
    bool was_held;
    Weight weight_before;
    EventCause cause;  // the last event that touched the pair
  };
  std::map<HeldPairs::KeyPair, HoldTouch> holds_touched;
  RepairStats stats;
  bool staged = false;        // Pool::stage() ran, Pool::repair() not yet
  bool staged_solve = false;  // the staged batch is solved from scratch (the pool was empty)
};

struct Pool::State : PoolState {
  using PoolState::PoolState;
};

inline std::uint64_t slot_pair(Vertex a, Vertex b) {
  return a < b ? (std::uint64_t{a} << 32) | b : (std::uint64_t{b} << 32) | a;
}

// Whether new pools use the phantom vertex: yes unless YOKE_PHANTOM=0 (a switch for tests).
bool phantom_switched_on();
// Brings φ in or out so that it is present exactly when the pool wants it (see PoolState):
// φ enters exposed at the least price that keeps its edges feasible (a root when positive),
// and leaves like a departing vertex (its mate becomes a root). O(log n) plus a departure's
// dissolving.
void sync_phantom(PoolState& pool);
// Joins every vertex of the pool to φ's heap at its price (`prices`, once resized): a pool
// solved from scratch or restored. O(n log n).
void join_every_price(PoolState& pool);
// The state whose prices certify G: the pool's own, or while φ is present a copy with φ taken
// out and the optimum of the graph without it restored (its mate's tree grown again; O(n) and
// a search), made once per commit and kept in `without_phantom`.
const MatchingState& certified_state(const PoolState& pool);
// Applies one event to the graph alone. Precondition: the pool was empty when the batch began
// (every slot exposed with dual 0, no blossoms), so the batch is then solved from scratch.
void load_event(PoolState& pool, const Event& event);
// Applies one event and restores every optimality condition except "an exposed vertex has
// dual 0" at the vertices it queues in root_candidates. Precondition: the event passed check.
void apply_event(PoolState& pool, const Event& event);
// Grows alternating trees from the queued roots until the matching is optimal again.
void search_from_roots(PoolState& pool);
// Vertex v's doubled dual during a repair: dual2[v] plus what a dissolution still owes it
// (BlossomForest::pending_dual2). Outside a repair dual2[v] alone.
Weight vertex_dual2(const PoolState& pool, Vertex v);
// Writes the duals the repair's dissolutions still owe into the vertices that were not visited
// for them (counted as touched). Pool::repair's last step on the duals: after it every reader
// may take dual2 as it is. Returns the number of vertices written.
std::size_t flush_pending_duals(PoolState& pool);
// Moves the churn bonus from the pairs the commit broke to the pairs it formed, repairing after
// each move, until the bonus sits on exactly the matching (docs/mathematics.md §6).
void settle_churn_bonus(PoolState& pool);
// The diff of the commit, read from the mate journal; updates pool.weight and pool.pairs.
MatchingDiff collect_diff(PoolState& pool);

}  // namespace yoke
