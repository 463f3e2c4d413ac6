// The cause of each change of pairs: on small pools where the cause is known by
// construction (common knowledge: the only event that can break or make a pair here is the one
// named in each test).
#include <gtest/gtest.h>

#include <vector>

#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "tests/event_builders.h"

namespace yoke {
namespace {

// Every answer here is also an optimum: the independent checker accepts the pool's certificate.
CommitResult commit_checked(Pool& pool, const std::vector<Event>& batch) {
  CommitResult result = pool.commit(batch);
  const PoolExport exported = pool.export_certified();
  const CheckResult verdict = check_certificate(exported.graph, exported.certificate);
  EXPECT_TRUE(verdict.ok) << verdict.failure;
  return result;
}

TEST(PoolCause, FirstSolveHasNoEventAsCause) {
  Pool pool(Mode::max_weight);
  const std::vector<Event> batch{set(1, 2, 5), set(3, 4, 7)};
  const CommitResult result = commit_checked(pool, batch);
  ASSERT_EQ(result.diff.added.size(), 2u);
  EXPECT_EQ(result.diff.added_cause, (std::vector<EventCause>{kNoCause, kNoCause}));
  EXPECT_TRUE(result.diff.removed_cause.empty());
}

TEST(PoolCause, ARivalEdgeThatRisesTakesTheVertex) {
  Pool pool(Mode::max_weight);
  commit_checked(pool, std::vector<Event>{set(1, 2, 5), add(3)});
  // Event 1 makes {2,3} worth more than {1,2}: it breaks {1,2} and forms {2,3}.
  const CommitResult result = commit_checked(pool, std::vector<Event>{add(9), set(2, 3, 9), add(10)});
  ASSERT_EQ(result.diff.removed, (std::vector<MatchedPair>{{1, 2, 5}}));
  ASSERT_EQ(result.diff.added, (std::vector<MatchedPair>{{2, 3, 9}}));
  EXPECT_EQ(result.diff.removed_cause, (std::vector<EventCause>{1}));
  EXPECT_EQ(result.diff.added_cause, (std::vector<EventCause>{1}));
}

TEST(PoolCause, ARemovalFreesItsMateWhoPairsAgain) {
  Pool pool(Mode::max_weight);
  commit_checked(pool, std::vector<Event>{set(1, 2, 8), set(1, 4, 3), set(5, 6, 1)});
  ASSERT_EQ(pool.mate_of(1), 2u);
  const CommitResult result = commit_checked(pool, std::vector<Event>{set(5, 6, 2), add(7), remove(2)});
  ASSERT_EQ(result.diff.removed, (std::vector<MatchedPair>{{1, 2, 8}}));
  ASSERT_EQ(result.diff.added, (std::vector<MatchedPair>{{1, 4, 3}}));
  EXPECT_EQ(result.diff.removed_cause, (std::vector<EventCause>{2}));
  EXPECT_EQ(result.diff.added_cause, (std::vector<EventCause>{2}));
}

TEST(PoolCause, EachChangeGoesBackToItsOwnEvent) {
  Pool pool(Mode::max_weight);
  commit_checked(pool, std::vector<Event>{set(1, 2, 5), set(3, 4, 5), set(2, 3, 1)});
  // Event 0 removes {1,2}; event 1 lowers {3,4} below zero, so 3 and 4 part. Then 2 and 3 are
  // both free and {2,3} forms from the search of one of them: event 0's or event 1's.
  const CommitResult result = commit_checked(pool, std::vector<Event>{unset(1, 2), set(3, 4, -1)});
  ASSERT_EQ(result.diff.removed, (std::vector<MatchedPair>{{1, 2, 5}, {3, 4, 5}}));
  ASSERT_EQ(result.diff.added, (std::vector<MatchedPair>{{2, 3, 1}}));
  EXPECT_EQ(result.diff.removed_cause, (std::vector<EventCause>{0, 1}));
  ASSERT_EQ(result.diff.added_cause.size(), 1u);
  EXPECT_LE(result.diff.added_cause[0], 1u);
}

// In the modes with an offset a commit's trees grow together in one run (pool_repair.cpp):
// each keeps its own event.
TEST(PoolCause, TreesGrownTogetherKeepTheirOwnEvents) {
  for (const Mode mode : {Mode::max_cardinality, Mode::perfect}) {
    Pool pool(mode);
    // Two squares alike: each matched on its heavy sides {a,b}, {c,d}.
    commit_checked(pool, std::vector<Event>{set(1, 2, 5), set(2, 3, 4), set(3, 4, 5), set(4, 1, 4),
                                            set(11, 12, 5), set(12, 13, 4), set(13, 14, 5),
                                            set(14, 11, 4)});
    // Each event makes its square's other sides worth more: both squares turn, each by its own
    // event's tree.
    const CommitResult result =
        commit_checked(pool, std::vector<Event>{set(1, 2, 1), set(11, 12, 1)});
    ASSERT_EQ(result.diff.removed,
              (std::vector<MatchedPair>{{1, 2, 5}, {3, 4, 5}, {11, 12, 5}, {13, 14, 5}}));
    ASSERT_EQ(result.diff.added,
              (std::vector<MatchedPair>{{1, 4, 4}, {2, 3, 4}, {11, 14, 4}, {12, 13, 4}}));
    EXPECT_EQ(result.diff.removed_cause, (std::vector<EventCause>{0, 0, 1, 1}));
    EXPECT_EQ(result.diff.added_cause, (std::vector<EventCause>{0, 0, 1, 1}));
  }
}

TEST(PoolCause, TwoTreesThatMeetGoBackToTheEarlierEvent) {
  Pool pool(Mode::max_cardinality);
  commit_checked(pool, std::vector<Event>{set(1, 2, 5), set(3, 4, 5), set(2, 3, 1)});
  // Each event frees one of 2 and 3; their trees meet on {2,3}.
  const CommitResult result = commit_checked(pool, std::vector<Event>{unset(3, 4), unset(1, 2)});
  ASSERT_EQ(result.diff.added, (std::vector<MatchedPair>{{2, 3, 1}}));
  EXPECT_EQ(result.diff.added_cause, (std::vector<EventCause>{0}));
}

}  // namespace
}  // namespace yoke
