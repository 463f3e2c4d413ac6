// BatchChecker: batches checked one after another against a pool plus the batches accepted
// before them, as the daemon's batching window does.
#include <gtest/gtest.h>

#include <deque>
#include <optional>
#include <string>
#include <random>
#include <vector>

#include "tests/event_builders.h"
#include "yoke/batch_checker.h"
#include "yoke/certificate.h"
#include "yoke/pool.h"

namespace yoke {
namespace {

// `size` random events over vertex keys 0..max_key: arrivals, edges set (twice as often),
// unset, departures and holds.
std::vector<Event> random_events(std::mt19937_64& random, int size, VertexKey max_key) {
  std::uniform_int_distribution<int> kind(0, 5);
  std::uniform_int_distribution<VertexKey> key(0, max_key);
  std::uniform_int_distribution<Weight> weight(-20, 60);
  std::vector<Event> batch(size);
  for (Event& event : batch) {
    switch (kind(random)) {
      case 0: event = add(key(random)); break;
      case 1:
      case 2: event = set(key(random), key(random), weight(random)); break;
      case 3: event = unset(key(random), key(random)); break;
      case 4: event = remove(key(random)); break;
      default: event = hold(key(random), key(random)); break;
    }
  }
  return batch;
}

// Common knowledge (batch_checker.h): a batch may rely on what earlier accepted batches did.
TEST(BatchChecker, LaterBatchesSeeEarlierAcceptedOnes) {
  Pool pool(Mode::max_weight);
  BatchChecker checker(pool);
  EXPECT_FALSE(checker.accept(std::vector{add(1), set(1, 2, 5)}));
  EXPECT_FALSE(checker.accept(std::vector{unset(2, 1), remove(2)}));
  const auto error = checker.accept(std::vector{set(3, 4, 1), remove(2)});
  ASSERT_TRUE(error);
  EXPECT_EQ(error->index, 1u);
  EXPECT_EQ(error->code, EventErrorCode::unknown_vertex);
  EXPECT_EQ(checker.accepted_events(), 4u);
}

// Common knowledge (batch_checker.h): a refused batch leaves no trace for the batches after it.
TEST(BatchChecker, RefusedBatchLeavesNoTrace) {
  Pool pool(Mode::max_weight);
  ASSERT_FALSE(pool.check(std::vector{set(1, 2, 3)}));
  pool.commit(std::vector{set(1, 2, 3)});
  BatchChecker checker(pool);
  // Each refused batch first changes what a later, good batch depends on.
  const auto removed = checker.accept(std::vector{remove(1), add(7), set(5, 5, 1)});
  ASSERT_TRUE(removed);
  EXPECT_EQ(removed->code, EventErrorCode::self_loop);
  const auto unset_first = checker.accept(std::vector{unset(1, 2), add(1)});
  ASSERT_TRUE(unset_first);
  EXPECT_EQ(unset_first->code, EventErrorCode::vertex_exists);
  EXPECT_FALSE(checker.accept(std::vector{unset(1, 2), add(7), remove(1)}));
  EXPECT_EQ(checker.accepted_events(), 3u);
}

// Found by ingest_fuzz (tests/fuzz/regressions/ingest): a refused batch that released a pair
// the pool holds must leave it held for the batches after it. Reference: events.proto (a hold
// lasts until its release, the unset of its edge or a departure).
TEST(BatchChecker, RefusedReleaseLeavesThePoolsHold) {
  Pool pool(Mode::max_weight);
  pool.commit(std::vector{set(1, 2, 6), set(3, 4, 5), set(4, 5, 6), hold(3, 4)});
  BatchChecker checker(pool);
  EXPECT_FALSE(checker.accept(std::vector{set(3, 4, 1)}));
  const auto refused = checker.accept(std::vector{release(4, 3), hold(5, 3)});
  ASSERT_TRUE(refused);
  EXPECT_EQ(refused->code, EventErrorCode::unknown_edge);
  const auto held = checker.accept(std::vector{hold(4, 5)});
  ASSERT_TRUE(held);
  EXPECT_EQ(held->code, EventErrorCode::already_held);
  EXPECT_FALSE(checker.accept(std::vector{release(4, 3)}));
}

// Limits hold at the end of each batch (batch_checker.h): a pool at max_edges takes a batch that
// passes above the limit on its way and ends at it.
TEST(BatchChecker, EdgeLimitIsCheckedAtTheEndOfTheBatch) {
  PoolLimits limits;
  limits.max_edges = 2;
  Pool pool(Mode::max_weight, limits);
  pool.commit(std::vector{set(1, 2, 4), set(3, 4, 6)});
  BatchChecker checker(pool);
  EXPECT_FALSE(checker.accept(std::vector{set(5, 1, 3), unset(1, 2)}));
  // Now at the limit again: a batch that ends above it names the event from which it stayed
  // above (event 2; event 0 went above, event 1 came back).
  const auto error = checker.accept(std::vector{set(6, 7, 1), unset(5, 1), set(8, 9, 2)});
  ASSERT_TRUE(error);
  EXPECT_EQ(error->code, EventErrorCode::limit_exceeded);
  EXPECT_EQ(error->index, 2u);
  EXPECT_NE(error->message.find("limit of 2"), std::string::npos) << error->message;
  // Refused without a trace: the window still holds {5, 1} and {3, 4}.
  EXPECT_FALSE(checker.accept(std::vector{unset(5, 1), set(6, 7, 1)}));
}

TEST(BatchChecker, VertexLimitIsCheckedAtTheEndOfTheBatch) {
  PoolLimits limits;
  limits.max_vertices = 3;
  Pool pool(Mode::max_weight, limits);
  pool.commit(std::vector{set(1, 2, 4), add(3)});
  EXPECT_FALSE(pool.check(std::vector{add(4), remove(3)}));
  EXPECT_FALSE(pool.check(std::vector{set(4, 5, 1), remove(1), remove(2)}));
  const auto error = pool.check(std::vector{add(4), remove(4), add(5)});
  ASSERT_TRUE(error);
  EXPECT_EQ(error->code, EventErrorCode::limit_exceeded);
  EXPECT_EQ(error->index, 2u);
  // An arrival and a departure do not cancel across a refused batch.
  EXPECT_FALSE(pool.check(std::vector{remove(3), add(9)}));
}

// Differential: the checker's verdict on each batch equals Pool::check on a pool that has
// committed exactly the batches accepted before it (the pool's own check is the reference).
TEST(BatchChecker, AgreesWithCheckingAfterEachCommit) {
  std::mt19937_64 random(20261202);
  for (int round = 0; round < 300; ++round) {
    PoolLimits limits;
    limits.max_vertices = 7;
    limits.max_edges = 9;
    limits.max_abs_weight = 50;
    Pool base(Mode::max_weight, limits);
    Pool reference(Mode::max_weight, limits);
    // A warm start common to both pools.
    const std::vector start{set(0, 1, 4), set(1, 2, 6), set(2, 3, 5)};
    base.commit(start);
    reference.commit(start);
    BatchChecker checker(base);
    std::uniform_int_distribution<int> kind(0, 5);
    std::uniform_int_distribution<VertexKey> key(0, 8);
    std::uniform_int_distribution<Weight> weight(-60, 60);
    for (int batch_index = 0; batch_index < 12; ++batch_index) {
      std::vector<Event> batch(std::uniform_int_distribution<int>(0, 4)(random));
      for (Event& event : batch) {
        switch (kind(random)) {
          case 0: event = add(key(random)); break;
          case 1: event = set(key(random), key(random), weight(random)); break;
          case 2: event = unset(key(random), key(random)); break;
          case 3: event = remove(key(random)); break;
          case 4: event = hold(key(random), key(random)); break;
          default: event = release(key(random), key(random)); break;
        }
      }
      const std::optional<EventError> expected = reference.check(batch);
      const std::optional<EventError> got = checker.accept(batch);
      ASSERT_EQ(got.has_value(), expected.has_value()) << "round " << round;
      if (expected) {
        EXPECT_EQ(got->index, expected->index);
        EXPECT_EQ(got->code, expected->code);
        EXPECT_EQ(got->message, expected->message);
      } else {
        reference.commit(batch);
      }
    }
  }
}

// Pool::stage then Pool::repair is Pool::commit (pool.h): between them a checker over the
// staged pool gives the verdicts Pool::check gives on a pool that committed the batch (the
// daemon checks the next batches there while the repair runs), and the repair's result equals
// the commit's. References: the committed twin's own check and result; every state certified
// by check_certificate, the engine's independent referee.
TEST(BatchChecker, AStagedPoolIsCheckedAsTheCommittedOne) {
  std::mt19937_64 random(20261204);
  const auto random_batch = [&random](int size) { return random_events(random, size, 30); };
  for (int round = 0; round < 40; ++round) {
    Pool staged(Mode::max_weight, {}, round % 2 == 0 ? 0 : 7);
    Pool committed(Mode::max_weight, {}, round % 2 == 0 ? 0 : 7);
    for (int step = 0; step < 30; ++step) {
      std::vector<Event> batch = random_batch(1 + step % 6);
      if (committed.check(batch)) continue;  // only batches that apply are staged
      staged.stage(batch);
      const CommitResult expected = committed.commit(batch);
      BatchChecker checker(staged);
      for (int probe = 0; probe < 4; ++probe) {
        const std::vector<Event> next = random_batch(3);
        const std::optional<EventError> want = committed.check(next);
        const std::optional<EventError> got = checker.accept(next);
        ASSERT_EQ(got.has_value(), want.has_value()) << "round " << round << " step " << step;
        if (want) {
          EXPECT_EQ(got->message, want->message);
        }
        checker.clear();
      }
      EXPECT_EQ(staged.vertex_count(), committed.vertex_count());
      EXPECT_EQ(staged.edge_count(), committed.edge_count());
      const CommitResult result = staged.repair();
      EXPECT_EQ(result.weight, expected.weight);
      EXPECT_EQ(result.diff.added, expected.diff.added);
      EXPECT_EQ(result.diff.removed, expected.diff.removed);
      EXPECT_EQ(staged.matching(), committed.matching());
      const PoolExport exported = staged.export_certified();
      const CheckResult checked = check_certificate(exported.graph, exported.certificate);
      ASSERT_TRUE(checked.ok) << "round " << round << " step " << step;
    }
  }
}

// A checker that goes on checking while the windows it accepted are staged into its pool
// (batch_checker.h: end_window, window_staged): at a pool of max_edges 3 the counts of a window
// leave the checker once staged, and before that its edge count over a departure is an upper
// bound. Reference: Pool::check on a pool that committed the same batches.
TEST(BatchChecker, AWindowStagedUnderTheCheckerIsCountedOnce) {
  PoolLimits limits;
  limits.max_vertices = 5;
  limits.max_edges = 3;
  Pool pool(Mode::max_weight, limits);
  pool.commit(std::vector{set(1, 2, 4)});
  BatchChecker checker(pool);
  const std::vector window{set(3, 4, 6), set(2, 3, 1)};
  EXPECT_FALSE(checker.accept(window));
  const BatchChecker::CountChange change = checker.end_window();
  EXPECT_EQ(change, (BatchChecker::CountChange{2, 2}));
  EXPECT_TRUE(checker.accept(std::vector{set(4, 5, 2)}));  // 4 edges
  pool.stage(window);
  checker.window_staged(change);
  EXPECT_EQ(pool.edge_count(), 3u);
  // Ends at 3 edges, 5 vertices: counted once, it fits.
  EXPECT_FALSE(checker.accept(std::vector{unset(1, 2), set(4, 5, 2)}));
  const auto refused = checker.accept(std::vector{add(6)});
  ASSERT_TRUE(refused);
  EXPECT_EQ(refused->code, EventErrorCode::limit_exceeded);
  pool.repair();
  // The next window: a departure of a vertex with two edges, not staged.
  const BatchChecker::CountChange second = checker.end_window();
  EXPECT_EQ(second, (BatchChecker::CountChange{1, 0}));
  pool.stage(std::vector{unset(1, 2), set(4, 5, 2)});
  checker.window_staged(second);
  pool.repair();
  EXPECT_FALSE(checker.accept(std::vector{remove(3)}));  // {2,3} and {3,4} go with it
  const BatchChecker::CountChange departure = checker.end_window();
  const std::vector<Event> next{set(1, 2, 3), set(1, 5, 1)};
  EXPECT_TRUE(checker.accept(next));  // the upper bound: 3 + 2 edges
  pool.stage(std::vector{remove(3)});
  checker.window_staged(departure);
  EXPECT_FALSE(checker.accept(next));  // exact once staged: 1 + 2
  EXPECT_FALSE(pool.check(next));
  pool.repair();
  pool.commit(next);
  EXPECT_EQ(pool.edge_count(), 3u);
  EXPECT_EQ(pool.vertex_count(), 4u);
}

// Differential: windows ended and staged at random under one checker (each stage once the
// repair before it ran, as the daemon's strand does) give, batch by batch, the verdicts and
// messages of Pool::check on a pool that committed every batch accepted before (no edge limit
// in reach: its count is an upper bound within a window; the vertex limit is often reached).
TEST(BatchChecker, WindowsStagedUnderTheCheckerAgreeWithCommitting) {
  std::mt19937_64 random(20261205);
  for (int round = 0; round < 60; ++round) {
    PoolLimits limits;
    limits.max_vertices = 6;
    Pool staged(Mode::max_weight, limits);
    Pool reference(Mode::max_weight, limits);
    BatchChecker checker(staged);
    std::vector<Event> open;  // the current window's accepted events
    std::deque<std::pair<std::vector<Event>, BatchChecker::CountChange>> ended;
    for (int step = 0; step < 40; ++step) {
      const std::vector<Event> batch = random_events(random, 1 + step % 4, 9);
      const std::optional<EventError> want = reference.check(batch);
      const std::optional<EventError> got = checker.accept(batch);
      ASSERT_EQ(got.has_value(), want.has_value()) << "round " << round << " step " << step;
      if (want) {
        EXPECT_EQ(got->index, want->index);
        EXPECT_EQ(got->message, want->message);
      } else {
        reference.commit(batch);
        open.insert(open.end(), batch.begin(), batch.end());
      }
      if (random() % 3 == 0) {
        ended.emplace_back(std::move(open), checker.end_window());
        open.clear();
      }
      if (!ended.empty() && random() % 2 == 0) {
        staged.stage(ended.front().first);
        checker.window_staged(ended.front().second);
        ended.pop_front();
        staged.repair();
      }
    }
    while (!ended.empty()) {
      staged.stage(ended.front().first);
      checker.window_staged(ended.front().second);
      ended.pop_front();
      staged.repair();
    }
    staged.commit(open);
    EXPECT_EQ(staged.vertex_count(), reference.vertex_count());
    EXPECT_EQ(staged.edge_count(), reference.edge_count());
    EXPECT_EQ(staged.weight(), reference.weight());
    const PoolExport exported = staged.export_certified();
    ASSERT_TRUE(check_certificate(exported.graph, exported.certificate).ok) << "round " << round;
  }
}

}  // namespace
}  // namespace yoke
