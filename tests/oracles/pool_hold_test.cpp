// Held pairs: a held pair stays matched whatever the weights, and the rest of the pool is
// optimised around it. After every commit of seeded streams with holds and releases mixed in,
// the pool's weight less its held pairs must be the optimum of the graph without the held
// vertices: oracle: LEMON MaxWeightedMatching / MaxWeightedPerfectMatching / MaxMatching (Debian
// liblemon-dev 1.3.1, lemon_oracle.h). The pool's certificate must hold as well.
#include <gtest/gtest.h>

#include <algorithm>
#include <random>
#include <set>
#include <string>
#include <tuple>
#include <vector>

#include "checked_solve.h"
#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "lemon_oracle.h"
#include "stream_cases.h"
#include "test_scale.h"
#include "tests/event_builders.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::oracle {
namespace {

using gen::StreamFamily;

// A batch that holds a few free edges of the pool and releases a few held pairs.
std::vector<Event> hold_batch(const Pool& pool, std::mt19937_64& random) {
  const PoolExport exported = pool.export_certified();
  std::vector<Event> batch;
  for (const MatchedPair& p : exported.held) {
    if (random() % 3 == 0) batch.push_back(release(p.b, p.a));
  }
  std::set<VertexKey> used;
  for (const Edge& e : exported.graph.edges()) {
    const VertexKey a = exported.keys[e.a];
    const VertexKey b = exported.keys[e.b];
    if (random() % 8 != 0 || used.contains(a) || used.contains(b)) continue;
    used.insert(a);
    used.insert(b);
    batch.push_back(hold(a, b));
  }
  return batch;
}

void expect_holds_kept(StreamFamily family, Mode mode, std::uint64_t seed, Weight bonus) {
  const std::string label = std::string("holds_") + gen::stream_family_name(family) + "_" +
                            mode_name(mode) + "_seed" + std::to_string(seed);
  std::mt19937_64 random(seed);
  PoolLimits limits;
  limits.max_vertices = 4096;
  limits.max_abs_weight = 1'000'000;
  Pool pool(mode, limits, bonus);
  gen::EventStream stream(gen::test_stream_spec(family, seed, 40, 30));
  std::vector<Event> batch;
  std::size_t batches = 0;
  std::size_t held_seen = 0;  // held pairs summed over the commits: the test must hold some
  for (;;) {
    if (batches++ % 3 == 2) {
      batch = hold_batch(pool, random);
    } else if (!stream.next_batch(batch)) {
      break;
    }
    ASSERT_FALSE(pool.check(batch).has_value()) << label << ": " << pool.check(batch)->message;
    const CommitResult result = pool.commit(batch);
    SCOPED_TRACE(label + ", commit " + std::to_string(result.commit));
    const PoolExport exported = pool.export_certified();
    const CheckResult verdict = check_certificate(exported.graph, exported.certificate);
    ASSERT_TRUE(verdict.ok) << verdict.failure;
    Weight held_weight = 0;
    held_seen += exported.held.size();
    for (const MatchedPair& p : exported.held) {
      ASSERT_EQ(pool.mate_of(p.a), p.b);
      ASSERT_EQ(pool.mate_of(p.b), p.a);
      held_weight += p.w;
    }
    ASSERT_EQ(result.weight, pool.weight());
    ASSERT_EQ(result.pairs, pool.matching().size());
    if (bonus != 0) continue;  // the churn test checks the bonus; here the holds alone
    const Answer best = lemon_optimum(exported.graph, mode);
    if (mode == Mode::perfect && !best.feasible) {
      ASSERT_EQ(result.status, SolveStatus::no_perfect_matching);
      continue;
    }
    ASSERT_EQ(result.weight - held_weight, best.weight)
        << "\n  graph: " << write_reproducer(exported.graph, mode, label);
    if (mode != Mode::max_weight) {
      ASSERT_EQ(result.pairs - exported.held.size(), best.pairs);
    }
  }
  EXPECT_GT(held_seen, 0u) << label;
}

class HoldsAgainstLemon : public testing::TestWithParam<StreamCase> {};

TEST_P(HoldsAgainstLemon, HeldPairsStayAndTheRestIsOptimal) {
  const auto [family, mode] = GetParam();
  const int seeds = scaled(20);
  for (int seed = 0; seed < seeds && !HasFailure(); ++seed) {
    const auto s = static_cast<std::uint64_t>(7000 + seed);
    expect_holds_kept(family, mode, s, 0);
    expect_holds_kept(family, mode, s, 25);  // with a churn bonus: certified, holds kept
  }
}

INSTANTIATE_TEST_SUITE_P(Streams, HoldsAgainstLemon, all_stream_cases(), stream_case_name);

// Common knowledge, by hand: {2,3} outweighs {1,2}, but {1,2} is held.
TEST(Holds, AHeldPairStaysWhateverTheWeights) {
  Pool pool(Mode::max_weight);
  pool.commit(std::vector<Event>{set(1, 2, 5), set(2, 3, 9)});
  EXPECT_EQ(pool.mate_of(2), 3u);
  CommitResult result = pool.commit(std::vector<Event>{hold(1, 2)});
  EXPECT_EQ(result.diff.removed, (std::vector<MatchedPair>{{2, 3, 9}}));
  EXPECT_EQ(result.diff.added, (std::vector<MatchedPair>{{1, 2, 5}}));
  EXPECT_EQ(result.diff.added_cause, (std::vector<EventCause>{0}));
  EXPECT_EQ(result.weight, 5);
  // Its edge may fall below zero and its vertices gain edges: it stays.
  result = pool.commit(std::vector<Event>{set(1, 2, -4), set(1, 4, 50), set(3, 4, 1)});
  EXPECT_EQ(pool.mate_of(1), 2u);
  EXPECT_EQ(pool.mate_of(3), 4u);
  EXPECT_EQ(result.weight, -4 + 1);
  const std::optional<VertexExplanation> why = pool.explain(1);
  ASSERT_TRUE(why.has_value());
  EXPECT_TRUE(why->held);
  EXPECT_EQ(why->pair_weight, -4);
  // Released, the optimum comes back: {1,4} 50 and {2,3} 9.
  result = pool.commit(std::vector<Event>{release(2, 1)});
  EXPECT_EQ(pool.mate_of(1), 4u);
  EXPECT_EQ(pool.mate_of(2), 3u);
  EXPECT_EQ(result.weight, 59);
  const PoolExport exported = pool.export_certified();
  EXPECT_TRUE(check_certificate(exported.graph, exported.certificate).ok);
}

TEST(Holds, ADepartureOrAnUnsetEndsTheHold) {
  Pool pool(Mode::max_weight);
  pool.commit(std::vector<Event>{set(1, 2, 5), set(2, 3, 9), set(3, 4, 2)});
  pool.commit(std::vector<Event>{hold(1, 2), hold(3, 4)});
  CommitResult result = pool.commit(std::vector<Event>{{EventKind::remove_vertex, 1, 0, 0}});
  EXPECT_EQ(pool.mate_of(2), std::nullopt);  // 3 is still held with 4
  result = pool.commit(std::vector<Event>{{EventKind::unset_edge, 4, 3, 0}});
  EXPECT_EQ(pool.mate_of(2), 3u);
  EXPECT_EQ(result.weight, 9);
}

TEST(Holds, BadHoldsAreRefusedAndChangeNothing) {
  Pool pool(Mode::max_weight);
  pool.commit(std::vector<Event>{set(1, 2, 5), set(2, 3, 9), set(3, 4, 2), {EventKind::add_vertex, 9, 0, 0}});
  pool.commit(std::vector<Event>{hold(1, 2)});
  const auto code = [&](std::vector<Event> batch) {
    const auto error = pool.check(batch);
    return error ? error->code : EventErrorCode::vertex_exists;  // vertex_exists: "accepted" here
  };
  EXPECT_EQ(code({hold(3, 3)}), EventErrorCode::self_loop);
  EXPECT_EQ(code({hold(3, 77)}), EventErrorCode::unknown_vertex);
  EXPECT_EQ(code({hold(3, 9)}), EventErrorCode::unknown_edge);
  EXPECT_EQ(code({hold(2, 3)}), EventErrorCode::already_held);
  EXPECT_EQ(code({release(3, 4)}), EventErrorCode::not_held);
  EXPECT_EQ(code({release(1, 2), hold(2, 3)}), EventErrorCode::vertex_exists);  // fine in order
  EXPECT_EQ(code({release(1, 2), release(1, 2)}), EventErrorCode::not_held);
  EXPECT_EQ(code({{EventKind::remove_vertex, 1, 0, 0}, hold(2, 3)}), EventErrorCode::vertex_exists);
  EXPECT_EQ(code({{EventKind::unset_edge, 2, 1, 0}, release(1, 2)}), EventErrorCode::not_held);
  // An edge aside exists: it can be unset and held again after a release.
  EXPECT_EQ(code({set(1, 9, 3), {EventKind::unset_edge, 9, 1, 0}}), EventErrorCode::vertex_exists);
  EXPECT_EQ(pool.mate_of(1), 2u);
  EXPECT_EQ(pool.weight(), 5 + 2);
}

TEST(Holds, ASavedPoolKeepsItsHolds) {
  Pool pool(Mode::max_weight);
  pool.commit(std::vector<Event>{set(1, 2, 5), set(2, 3, 9), set(3, 4, 2), set(1, 4, 1)});
  pool.commit(std::vector<Event>{hold(1, 2)});
  const std::unique_ptr<Pool> copy = Pool::restore(pool.save());
  EXPECT_EQ(copy->matching(), pool.matching());
  EXPECT_EQ(copy->weight(), pool.weight());
  const std::vector<Event> batch{release(1, 2)};
  const CommitResult a = pool.commit(batch);
  const CommitResult b = copy->commit(batch);
  EXPECT_EQ(a.diff.added, b.diff.added);
  EXPECT_EQ(a.weight, b.weight);
}

}  // namespace
}  // namespace yoke::oracle
