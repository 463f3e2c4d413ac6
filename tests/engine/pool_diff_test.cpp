// What a pool reports about itself, commit by commit: its diffs against the matchings before and
// after, its queries (weight, pairs, mate_of, has_vertex), the same answers from the same
// stream, and batches it must reject without changing anything.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <limits>
#include <map>
#include <optional>
#include <ostream>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include "yoke/pool.h"
#include "tests/event_builders.h"
#include "tests/oracles/stream_cases.h"
#include "tests/oracles/test_scale.h"
#include "tools/graphgen/event_stream.h"

namespace yoke {

// Readable pairs in gtest messages.
inline void PrintTo(const MatchedPair& p, std::ostream* out) {
  *out << "{" << p.a << ", " << p.b << ", w " << p.w << "}";
}

namespace {

using gen::StreamFamily;
using KeyPair = std::pair<VertexKey, VertexKey>;

KeyPair key_of(const MatchedPair& p) { return {p.a, p.b}; }

std::set<KeyPair> keys_of(const std::vector<MatchedPair>& pairs) {
  std::set<KeyPair> keys;
  for (const MatchedPair& p : pairs) keys.insert(key_of(p));
  return keys;
}

// The pairs of `from` whose keys are not in `without`, in from's order.
std::vector<MatchedPair> minus(const std::vector<MatchedPair>& from,
                               const std::vector<MatchedPair>& without) {
  const std::set<KeyPair> drop = keys_of(without);
  std::vector<MatchedPair> out;
  for (const MatchedPair& p : from) {
    if (!drop.contains(key_of(p))) out.push_back(p);
  }
  return out;
}

// A pool's matching is a list of pairs sorted by (a, b), a < b, no vertex twice.
testing::AssertionResult well_formed(const std::vector<MatchedPair>& pairs, const char* what) {
  std::set<VertexKey> ends;
  for (std::size_t i = 0; i < pairs.size(); ++i) {
    const MatchedPair& p = pairs[i];
    if (p.a >= p.b) return testing::AssertionFailure() << what << ": pair " << i << " has a >= b";
    if (i > 0 && key_of(pairs[i - 1]) >= key_of(p)) {
      return testing::AssertionFailure() << what << ": not sorted at pair " << i;
    }
    if (!ends.insert(p.a).second || !ends.insert(p.b).second) {
      return testing::AssertionFailure() << what << ": a vertex in two pairs at pair " << i;
    }
  }
  return testing::AssertionSuccess();
}

// The weight of every edge of the pool, by key pair (a < b), from its export.
std::map<KeyPair, Weight> edge_weights(const Pool& pool, std::vector<VertexKey>& alive) {
  const PoolExport exported = pool.export_certified();
  alive = exported.keys;
  std::map<KeyPair, Weight> weights;
  for (const Edge& e : exported.graph.edges()) {
    const VertexKey a = exported.keys[e.a];
    const VertexKey b = exported.keys[e.b];
    weights[{std::min(a, b), std::max(a, b)}] = e.w;
  }
  return weights;
}

// Everything a commit reports, checked against the matchings before and after it.
// Common knowledge: a diff lists exactly what one matching lost and the other gained.
void expect_diff_consistent(const Pool& pool, const std::vector<MatchedPair>& before,
                            const std::vector<Event>& batch, const CommitResult& result,
                            const std::string& label) {
  SCOPED_TRACE(label + ", commit " + std::to_string(result.commit));
  const std::vector<MatchedPair> after = pool.matching();
  ASSERT_TRUE(well_formed(after, "matching()"));
  ASSERT_TRUE(well_formed(result.diff.removed, "diff.removed"));
  ASSERT_TRUE(well_formed(result.diff.added, "diff.added"));

  // removed = before \ after with the weights before the batch; added = after \ before with
  // the weights after it. A pair kept across the batch is in neither, whatever its weight;
  // that holds when one of its vertices left and came back within the batch too.
  std::string left_in_batch;
  for (const Event& e : batch) {
    if (e.kind != EventKind::remove_vertex) continue;
    left_in_batch += ' ';
    left_in_batch += std::to_string(e.u);
  }
  SCOPED_TRACE("vertices removed in this batch (some may be back):" + left_in_batch);
  EXPECT_EQ(result.diff.removed, minus(before, after));
  EXPECT_EQ(result.diff.added, minus(after, before));

  // Every change names the event it goes back to: one of the batch, or none for a first solve.
  ASSERT_EQ(result.diff.removed_cause.size(), result.diff.removed.size());
  ASSERT_EQ(result.diff.added_cause.size(), result.diff.added.size());
  for (const auto* causes : {&result.diff.removed_cause, &result.diff.added_cause}) {
    for (const EventCause cause : *causes) {
      if (result.stats.initial_solve) {
        EXPECT_EQ(cause, kNoCause);
      } else {
        EXPECT_LT(cause, batch.size());
      }
    }
  }

  // Applying the diff to the matching before gives the matching after.
  std::set<KeyPair> applied = keys_of(before);
  for (const MatchedPair& p : result.diff.removed) EXPECT_EQ(applied.erase(key_of(p)), 1u);
  for (const MatchedPair& p : result.diff.added) EXPECT_TRUE(applied.insert(key_of(p)).second);
  EXPECT_EQ(applied, keys_of(after));

  // The matching's weights are the edges' weights now, and add up to the reported weight.
  std::vector<VertexKey> alive;
  const std::map<KeyPair, Weight> weights = edge_weights(pool, alive);
  Weight total = 0;
  for (const MatchedPair& p : after) {
    const auto edge = weights.find(key_of(p));
    ASSERT_NE(edge, weights.end()) << "matched pair " << p.a << " " << p.b << " is no edge";
    EXPECT_EQ(p.w, edge->second) << "matched pair " << p.a << " " << p.b;
    total += p.w;
  }
  EXPECT_EQ(result.weight, total);
  EXPECT_EQ(result.pairs, after.size());
  EXPECT_EQ(pool.weight(), result.weight);
  EXPECT_EQ(pool.pairs(), result.pairs);
  EXPECT_EQ(pool.commits(), result.commit);

  // mate_of agrees with the matching at every vertex; has_vertex with the export.
  std::map<VertexKey, VertexKey> mate;
  for (const MatchedPair& p : after) {
    mate[p.a] = p.b;
    mate[p.b] = p.a;
  }
  for (const VertexKey key : alive) {
    ASSERT_TRUE(pool.has_vertex(key)) << key;
    const auto m = mate.find(key);
    const std::optional<VertexKey> expected =
        m == mate.end() ? std::nullopt : std::optional<VertexKey>(m->second);
    ASSERT_EQ(pool.mate_of(key), expected) << "mate_of(" << key << ")";
  }
  // Keys the batch names that are gone (removed and not back) are unknown to the pool.
  const std::set<VertexKey> alive_set(alive.begin(), alive.end());
  for (const Event& e : batch) {
    const bool has_v = e.kind == EventKind::set_edge || e.kind == EventKind::unset_edge;
    for (const VertexKey key : {e.u, has_v ? e.v : e.u}) {
      EXPECT_EQ(pool.has_vertex(key), alive_set.contains(key)) << key;
      if (!alive_set.contains(key)) {
        EXPECT_EQ(pool.mate_of(key), std::nullopt) << key;
      }
    }
  }
}

std::string trace_label(StreamFamily family, Mode mode, std::uint64_t seed) {
  return std::string(gen::stream_family_name(family)) + " " + mode_name(mode) + " seed " +
         std::to_string(seed);
}

TEST(PoolDiff, DiffsTakeTheMatchingBeforeToTheMatchingAfter) {
  const int seeds = oracle::scaled(20);
  for (const StreamFamily family : oracle::kStreamFamilies) {
    for (const Mode mode : oracle::kAllModes) {
      for (int seed = 0; seed < seeds && !HasFailure(); ++seed) {
        const auto s = static_cast<std::uint64_t>(1000 + seed);
        const std::string label = trace_label(family, mode, s);
        Pool pool(mode);
        gen::EventStream stream(gen::test_stream_spec(family, s, 40, 30));
        std::vector<Event> batch;
        while (stream.next_batch(batch) && !HasFailure()) {
          const std::vector<MatchedPair> before = pool.matching();
          ASSERT_FALSE(pool.check(batch).has_value()) << label;
          const CommitResult result = pool.commit(batch);
          expect_diff_consistent(pool, before, batch, result, label);
        }
      }
    }
  }
}

void expect_same_result(const CommitResult& x, const CommitResult& y) {
  EXPECT_EQ(x.commit, y.commit);
  EXPECT_EQ(x.status, y.status);
  EXPECT_EQ(x.weight, y.weight);
  EXPECT_EQ(x.pairs, y.pairs);
  EXPECT_EQ(x.diff.removed, y.diff.removed);
  EXPECT_EQ(x.diff.added, y.diff.added);
  // The work done is part of the determinism promise too (docs/contracts.md §4).
  EXPECT_EQ(x.stats.events, y.stats.events);
  EXPECT_EQ(x.stats.roots, y.stats.roots);
  EXPECT_EQ(x.stats.searches, y.stats.searches);
  EXPECT_EQ(x.stats.augmentations, y.stats.augmentations);
  EXPECT_EQ(x.stats.blossoms_dissolved, y.stats.blossoms_dissolved);
  EXPECT_EQ(x.stats.vertices_touched, y.stats.vertices_touched);
  EXPECT_EQ(x.stats.vertices_dissolved, y.stats.vertices_dissolved);
  EXPECT_EQ(x.stats.blossoms_formed, y.stats.blossoms_formed);
  EXPECT_EQ(x.stats.blossoms_expanded, y.stats.blossoms_expanded);
  EXPECT_EQ(x.stats.dual_steps, y.stats.dual_steps);
}

// Two pools fed the same stream give the same results, diffs and matchings at every commit.
TEST(PoolDiff, SameStreamSameAnswers) {
  const int seeds = oracle::scaled(5);
  for (const StreamFamily family : oracle::kStreamFamilies) {
    for (const Mode mode : {Mode::max_weight, Mode::max_cardinality}) {
      for (int seed = 0; seed < seeds && !HasFailure(); ++seed) {
        const auto s = static_cast<std::uint64_t>(2000 + seed);
        SCOPED_TRACE(trace_label(family, mode, s));
        Pool first(mode);
        Pool second(mode);
        for (const auto& batch : gen::generate_stream(gen::test_stream_spec(family, s, 60, 30))) {
          expect_same_result(first.commit(batch), second.commit(batch));
          ASSERT_EQ(first.matching(), second.matching());
        }
      }
    }
  }
}

// The probes' counters (yoke_tail_probe) say where a repair's visits went: the dissolving's
// pushes are part of the vertices touched, each tree augments at most once, and a commit that
// grew no tree formed, expanded and stepped nothing; over all the streams each counter moves.
TEST(PoolDiff, RepairCountersAddUp) {
  RepairStats total;
  for (const StreamFamily family : oracle::kStreamFamilies) {
    SCOPED_TRACE(trace_label(family, Mode::max_weight, 2100));
    Pool pool(Mode::max_weight);
    for (const auto& batch : gen::generate_stream(gen::test_stream_spec(family, 2100, 200, 100))) {
      const RepairStats s = pool.commit(batch).stats;
      if (s.initial_solve) continue;  // the static solver's figures
      EXPECT_LE(s.vertices_dissolved, s.vertices_touched);
      EXPECT_LE(s.augmentations, s.searches);
      if (s.searches == 0) {
        EXPECT_EQ(s.blossoms_formed + s.blossoms_expanded + s.dual_steps, 0u);
      }
      if (s.blossoms_dissolved == 0) {
        EXPECT_EQ(s.vertices_dissolved, 0u);
      }
      total.vertices_dissolved += s.vertices_dissolved;
      total.blossoms_formed += s.blossoms_formed;
      total.blossoms_expanded += s.blossoms_expanded;
      total.dual_steps += s.dual_steps;
    }
  }
  EXPECT_GT(total.vertices_dissolved, 0u);
  EXPECT_GT(total.blossoms_formed, 0u);
  EXPECT_GT(total.blossoms_expanded, 0u);
  EXPECT_GT(total.dual_steps, 0u);
}

// ---- bad batches ---------------------------------------------------------------------------

struct Snapshot {
  std::vector<MatchedPair> matching;
  Weight weight;
  std::size_t pairs;
  std::size_t vertices;
  std::size_t edges;
  std::uint64_t commits;
  friend bool operator==(const Snapshot&, const Snapshot&) = default;
};

Snapshot snapshot(const Pool& pool) {
  return {pool.matching(), pool.weight(), pool.pairs(), pool.vertex_count(), pool.edge_count(),
          pool.commits()};
}

// A pool warmed up by a stream, and keys to build bad batches from.
struct WarmPool {
  Pool pool;
  VertexKey a = 0, b = 0;   // an edge
  VertexKey c = 0;          // a vertex not adjacent to a
  bool found_c = false;
  VertexKey unknown = 0;    // no vertex
  VertexKey unknown2 = 0;

  explicit WarmPool(Mode mode) : pool(mode) {
    gen::StreamSpec spec = gen::test_stream_spec(StreamFamily::city, 7, 40, 10);
    spec.scrambled_keys = true;
    for (const auto& batch : gen::generate_stream(spec)) pool.commit(batch);
    const PoolExport exported = pool.export_certified();
    const Graph& g = exported.graph;
    const Edge& e = g.edge(0);
    a = exported.keys[e.a];
    b = exported.keys[e.b];
    std::set<Vertex> near_a = {e.a};
    for (const Incidence& inc : g.incident(e.a)) near_a.insert(inc.other);
    for (Vertex v = 0; v < g.vertex_count(); ++v) {
      if (!near_a.contains(v)) {
        c = exported.keys[v];
        found_c = true;
        break;
      }
    }
    unknown = 12345;
    while (pool.has_vertex(unknown)) ++unknown;
    unknown2 = unknown + 1;
    while (pool.has_vertex(unknown2)) ++unknown2;
  }
};

struct BadBatch {
  const char* what;
  std::vector<Event> events;
  std::size_t bad_index;
  EventErrorCode code;
};

// Common knowledge (events.h, Pool::check): each of these batches has one event that cannot
// apply; check names it, and the pool is as it was.
TEST(PoolCheck, RejectsBadBatchesAndChangesNothing) {
  for (const Mode mode : oracle::kAllModes) {
    SCOPED_TRACE(mode_name(mode));
    WarmPool warm(mode);
    ASSERT_TRUE(warm.found_c);
    Pool& pool = warm.pool;
    const auto [a, b, c, x, y] = std::tie(warm.a, warm.b, warm.c, warm.unknown, warm.unknown2);
    const Weight max = pool.limits().max_abs_weight;
    ASSERT_GT(max, 0);
    constexpr Weight kLowest = std::numeric_limits<Weight>::min();
    constexpr Weight kHighest = std::numeric_limits<Weight>::max();
    const std::vector<BadBatch> cases = {
        {"unset at an unknown vertex", {set(a, c, 5), unset(x, a)}, 1, EventErrorCode::unknown_edge},
        {"unset at two unknown vertices", {unset(x, y)}, 0, EventErrorCode::unknown_edge},
        {"unset of a missing edge", {unset(a, c)}, 0, EventErrorCode::unknown_edge},
        {"unset of an edge twice", {unset(a, b), unset(b, a)}, 1, EventErrorCode::unknown_edge},
        {"unset after its vertex left", {remove(a), unset(a, b)}, 1, EventErrorCode::unknown_edge},
        {"remove of an unknown vertex", {add(y), remove(x)}, 1, EventErrorCode::unknown_vertex},
        {"remove twice", {remove(a), remove(a)}, 1, EventErrorCode::unknown_vertex},
        {"add of a vertex that exists", {add(a)}, 0, EventErrorCode::vertex_exists},
        {"add twice", {add(x), set(x, a, 1), add(x)}, 2, EventErrorCode::vertex_exists},
        {"self loop", {set(a, a, 3)}, 0, EventErrorCode::self_loop},
        {"self loop at a new vertex", {set(x, x, 3)}, 0, EventErrorCode::self_loop},
        {"unset of a self loop", {unset(a, a)}, 0, EventErrorCode::self_loop},
        {"unset of a self loop at an unknown vertex", {unset(x, x)}, 0, EventErrorCode::self_loop},
        {"weight above the bound", {set(a, b, 1), set(a, c, max + 1)}, 1, EventErrorCode::weight_out_of_range},
        {"weight below the bound", {set(a, c, -max - 1)}, 0, EventErrorCode::weight_out_of_range},
        {"largest int64 weight", {set(x, y, kHighest)}, 0, EventErrorCode::weight_out_of_range},
        {"smallest int64 weight", {set(a, b, kLowest)}, 0, EventErrorCode::weight_out_of_range},
    };
    const Snapshot before = snapshot(pool);
    for (const BadBatch& bad : cases) {
      const std::optional<EventError> error = pool.check(bad.events);
      ASSERT_TRUE(error.has_value()) << bad.what;
      EXPECT_EQ(error->index, bad.bad_index) << bad.what;
      EXPECT_EQ(error->code, bad.code) << bad.what;
      EXPECT_FALSE(error->message.empty()) << bad.what;
      EXPECT_EQ(snapshot(pool), before) << bad.what;
    }

    // Batches that look odd but are valid pass, and leave no error behind.
    const std::vector<std::vector<Event>> valid = {
        {set(a, b, max), set(a, c, -max)},
        {remove(a), add(a)},
        {remove(a), set(a, b, 4)},
        {add(x), set(x, a, 1), remove(x)},
        {set(x, y, 2), unset(y, x)},
        {unset(a, b), set(b, a, 7)},
        {set(a, b, 0), set(a, b, -1), set(a, b, 9)},
        {},
    };
    for (const auto& batch : valid) {
      const std::optional<EventError> error = pool.check(batch);
      EXPECT_FALSE(error.has_value()) << (error ? error->message : "");
      EXPECT_EQ(snapshot(pool), before);
    }
    // The pool still commits after all the rejected checks.
    for (const auto& batch : valid) {
      ASSERT_FALSE(pool.check(batch).has_value());
      const CommitResult result = pool.commit(batch);
      EXPECT_EQ(result.weight, pool.weight());
    }
  }
}

// Common knowledge (pool.h): the limits count what is alive at once, earlier events of the
// batch included; a batch that would exceed one is rejected at the event that does.
TEST(PoolCheck, RejectsBatchesBeyondItsLimits) {
  PoolLimits limits;
  limits.max_vertices = 8;
  limits.max_edges = 6;
  Pool pool(Mode::max_weight, limits);
  std::vector<Event> eight;
  for (VertexKey k = 0; k < 8; ++k) eight.push_back(add(k));
  ASSERT_FALSE(pool.check(eight).has_value());
  pool.commit(eight);
  const std::vector<Event> six_edges = {set(0, 1, 1), set(2, 3, 1), set(4, 5, 1),
                                        set(6, 7, 1), set(0, 2, 1), set(1, 3, 1)};
  ASSERT_FALSE(pool.check(six_edges).has_value());
  pool.commit(six_edges);
  const Snapshot before = snapshot(pool);

  const auto rejected_at = [&](const std::vector<Event>& batch) -> std::optional<std::size_t> {
    const std::optional<EventError> error = pool.check(batch);
    EXPECT_EQ(snapshot(pool), before);
    if (!error) return std::nullopt;
    EXPECT_FALSE(error->message.empty());
    return error->index;
  };
  EXPECT_EQ(rejected_at({add(100)}), 0u);
  EXPECT_EQ(rejected_at({set(0, 1, 2), set(100, 1, 5)}), 1u);  // vertex 100 would be the 9th
  EXPECT_EQ(rejected_at({remove(0), add(100)}), std::nullopt);
  EXPECT_EQ(rejected_at({set(4, 6, 1)}), 0u);                   // a 7th edge
  EXPECT_EQ(rejected_at({set(0, 1, 9), set(7, 6, 2)}), std::nullopt);  // new weights only
}

}  // namespace
}  // namespace yoke
