// A pool: a graph that changes batch by batch, with its maximum-weight matching and the dual
// solution that proves it optimal kept warm in memory.
//
// A commit applies a batch of events and repairs the optimum locally (docs/mathematics.md §5):
// each event restores dual feasibility at the edge or vertex it changes, dissolving only the
// blossoms it breaks; then one primal-dual search from the vertices that break the optimality
// conditions ends in augmentations or in dual changes. Cost: O(R log R) for the region R the
// repair touches, never a pass over all vertices. The diff is collected while repairing.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "yoke/batch_checker.h"
#include "yoke/certificate.h"
#include "yoke/events.h"
#include "yoke/graph.h"
#include "yoke/solve.h"
#include "yoke/types.h"

namespace yoke {

// What a pool accepts. The bounds keep every engine value inside 64-bit integers: see
// resolve_limits() for the rules and DEVELOPERS.md ("Bounds") for the numbers.
struct PoolLimits {
  std::size_t max_vertices = std::size_t{1} << 22;  // alive at once
  std::size_t max_edges = std::size_t{1} << 26;     // alive at once
  // Largest accepted |w|. 0 picks the largest the mode allows with max_vertices.
  Weight max_abs_weight = 0;
};

// A pair of the matching, by the outside world's keys (a < b), with its weight.
struct MatchedPair {
  VertexKey a = 0;
  VertexKey b = 0;
  Weight w = 0;
  friend bool operator==(const MatchedPair&, const MatchedPair&) = default;
};

// How the matching changed in one commit: the pairs it lost and the pairs it gained, each
// sorted by (a, b). A pair whose weight changed but stayed matched is in neither list.
//
// Each change has a cause: the event whose repair broke the pair (an edge that fell or
// left, a vertex that left, a rise that made a rival edge worth more) or, for a gained pair,
// the event that queued the search that formed it. removed_cause[i] belongs to removed[i],
// added_cause[i] to added[i].
struct MatchingDiff {
  std::vector<MatchedPair> removed;  // with the weight the pair had before the batch
  std::vector<MatchedPair> added;    // with its weight after the batch
  std::vector<EventCause> removed_cause;
  std::vector<EventCause> added_cause;
};

struct RepairStats {
  std::uint64_t events = 0;
  std::uint64_t roots = 0;               // exposed vertices that broke the conditions
  std::uint64_t searches = 0;            // alternating trees grown
  std::uint64_t augmentations = 0;
  std::uint64_t blossoms_dissolved = 0;  // by events (the search forms and expands its own)
  std::uint64_t vertices_touched = 0;    // vertex visits: scans and dual pushes
  // Where the visits went, for benchmarks and probes (not on the wire; the search's three are
  // the repair's, 0 for a batch solved from scratch):
  // Dual pushes by the events' dissolving (in vertices_touched): to a vertex at once, or owed
  // by a blossom and written at the end of the repair; not those a search wrote while labelling.
  std::uint64_t vertices_dissolved = 0;
  // Blossom children the events' dissolving left owing their push (BlossomForest::pending_dual2)
  std::uint64_t blossoms_owing = 0;
  std::uint64_t blossoms_formed = 0;     // by the search
  std::uint64_t blossoms_expanded = 0;   // odd blossoms the search expanded
  std::uint64_t dual_steps = 0;          // the search's dual steps
  std::uint64_t last_level_scans = 0;    // scans at the dual level where each search ended
  std::uint64_t stale_bounds = 0;        // queued bounds the searches found out of date
  bool initial_solve = false;  // the pool was empty before the batch: solved from scratch
};

struct CommitResult {
  std::uint64_t commit = 0;  // 1 for the first commit of the pool
  SolveStatus status = SolveStatus::optimal;  // no_perfect_matching only in perfect mode
  Weight weight = 0;         // sum of the matched edges' weights
  std::size_t pairs = 0;
  MatchingDiff diff;
  RepairStats stats;
};

// Why a vertex is or is not paired: its doubled dual price, its pair, and the unmatched edges
// that came closest, with their doubled slack (2 x how much more weight each would need to be
// worth taking; 0 means a tie). All in the pool's internal weights: the mode's offset is added
// to every weight (weight_offset) and the duals include it.
struct Alternative {
  VertexKey other = 0;
  Weight w = 0;
  Weight slack2 = 0;
  std::optional<VertexKey> other_mate;
};
struct VertexExplanation {
  std::optional<VertexKey> mate;
  Weight pair_weight = 0;   // 0 when unpaired
  Weight pair_bonus = 0;    // the churn bonus the pair carries on top (in the duals and slacks)
  bool held = false;        // a held pair: fixed, so no price and no alternatives
  Weight dual2 = 0;         // doubled price
  Weight weight_offset = 0;
  std::vector<Alternative> alternatives;  // least slack first, ties by key
};

// The pool as a static graph (dense ids 0..n-1; keys[i] names vertex i) with its certificate,
// for the independent checker and for comparisons with a from-scratch solve. With a churn bonus
// the graph holds the weights the pool optimises: every matched edge carries matched_bonus on
// top of its own weight, so the certificate proves the matching optimal with its standing pairs
// favoured by that much.
//
// Held pairs are fixed, not optimised: they are listed in `held` and their vertices are
// left out of the graph (the certificate proves the optimum of the rest, which is the optimum
// of the pool under its holds).
struct PoolExport {
  Graph graph;
  std::vector<VertexKey> keys;
  Certificate certificate;
  Weight matched_bonus = 0;
  std::vector<MatchedPair> held;  // sorted
};

class Pool {
 public:
  // Throws InputError when the limits exceed what the mode can keep exact.
  //
  // Churn control: with churn_bonus > 0 a commit maximises w(M) + churn_bonus x |M ∩ M_before|,
  // where M_before is the matching before the batch: a standing pair is kept unless replacing
  // it gains more than the bonus. Reported weights never include the bonus. The bonus takes
  // room from the weight bound: max_abs_weight + churn_bonus must stay within the mode's bound.
  explicit Pool(Mode mode, PoolLimits limits = {}, Weight churn_bonus = 0);
  ~Pool();
  Pool(const Pool&) = delete;
  Pool& operator=(const Pool&) = delete;

  Mode mode() const;
  const PoolLimits& limits() const;
  Weight churn_bonus() const;

  // The first event of `batch` that cannot be applied to the current state (unknown vertex or
  // edge, self loop, weight out of range, a limit exceeded), or nothing. Earlier events of the
  // batch count: `add 7` then `set 7 8 1` is fine. Leaves the pool untouched. O(batch).
  std::optional<EventError> check(std::span<const Event> batch) const;

  // Applies a batch and repairs the optimum. Precondition: check(batch) found nothing.
  // The same as stage(batch) then repair().
  CommitResult commit(std::span<const Event> batch);

  // commit() in two steps, so that the next batches can be checked while the repair runs:
  // stage() applies the batch's changes of vertices, edges and holds (what BatchChecker and
  // has_vertex() read, and the counts); repair() restores the optimum and returns the commit's
  // result. From stage()'s return until the next stage() those do not change, so a
  // BatchChecker may read the pool on another thread during repair(), given a happens-before
  // from stage()'s return (the daemon checks waiting batches so, daemon/service). No other
  // call between them. Precondition of stage(): check(batch) found nothing, and no batch staged.
  void stage(std::span<const Event> batch);
  CommitResult repair();

  Weight weight() const;
  std::size_t pairs() const;
  std::size_t vertex_count() const;  // alive vertices
  std::size_t edge_count() const;
  std::uint64_t commits() const;
  bool has_vertex(VertexKey key) const;
  std::optional<VertexKey> mate_of(VertexKey key) const;
  // key's pair {key, mate, own weight} (a held pair's weight aside), or nothing when key is
  // unpaired or absent. O(degree).
  std::optional<MatchedPair> pair_of(VertexKey key) const;
  // The cycle edges of the smallest blossom holding `key`, by keys (empty when the vertex is in
  // no blossom or does not exist): edges whose change dissolves blossoms, for benchmarks and
  // tests that aim events at them. O(children of that blossom).
  std::vector<std::pair<VertexKey, VertexKey>> blossom_cycle_at(VertexKey key) const;
  // Every pair, sorted. O(n).
  std::vector<MatchedPair> matching() const;
  // Nothing when the vertex does not exist. At most `limit` alternatives. O(degree x depth in
  // the blossom forest + degree log degree); while the pool holds the phantom vertex (an odd
  // max-cardinality or perfect pool, docs/mathematics.md §9) the prices are the certificate's,
  // which costs what export_certified() does.
  std::optional<VertexExplanation> explain(VertexKey key, std::size_t limit = 5) const;
  // Whether the next explain() or export_certified() pays that search first (the phantom
  // vertex present and the certificate's prices not made since the last commit), O(1); and
  // the search, made now and kept until the next batch stages: a caller with threads runs it
  // where a long task may run (yoked: on the pool's worker, not its loop).
  bool certificate_prices_due() const;
  void make_certificate_prices() const;
  // O(n + m + blossom sizes); with the phantom vertex, plus the search that takes it out.
  PoolExport export_certified() const;

  // The pool's whole state as bytes, and a pool rebuilt from them that behaves exactly as this
  // one would: the same later batches give the same results and diffs. Both O(n + m + blossom
  // sizes). restore() throws InputError on bytes that do not describe a consistent pool; a
  // caller that did not write the bytes itself should also check the restored certificate.
  std::string save() const;
  static std::unique_ptr<Pool> restore(std::string_view bytes);

 private:
  friend class BatchChecker;  // reads the state it checks batches against
  struct State;
  explicit Pool(std::unique_ptr<State> state);
  std::unique_ptr<State> state_;
};

}  // namespace yoke
