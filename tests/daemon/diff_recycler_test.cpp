// Diffs made in recycled messages (DiffRecycler): the same bytes as diffs made fresh, their
// pair messages reused rather than allocated, and the recycler's bounds. Through a service
// that gets every published diff back, the same diffs as a service that gets none back.
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/service/diff_message.h"
#include "daemon/service/diff_recycler.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

CommitResult commit_changing(std::size_t removed, std::size_t added, std::uint64_t salt) {
  CommitResult result;
  for (std::size_t i = 0; i < removed; ++i) {
    result.diff.removed.push_back({salt + 2 * i, salt + 2 * i + 1, -static_cast<Weight>(i)});
  }
  for (std::size_t i = 0; i < added; ++i) {
    result.diff.added.push_back({3 * i, 3 * i + salt + 1, static_cast<Weight>(salt * i)});
  }
  result.weight = static_cast<Weight>(salt) - 7;
  result.pairs = added + salt;
  result.stats.events = salt + 1;
  return result;
}

std::string fresh_bytes(const CommitResult& result, std::uint64_t seq) {
  return diff_of_commit("harbour", result, seq, seq - 2, seq % 2 == 0, seq * 10)
      .SerializeAsString();
}

TEST(DiffRecycler, DiffInRecycledMessageHasFreshBytes) {
  DiffRecycler recycler;
  // Shrinking, growing past what the message held, empty, and a different pool name.
  const std::vector<std::pair<std::size_t, std::size_t>> shapes = {
      {40, 25}, {3, 0}, {0, 60}, {0, 0}, {17, 70}, {70, 17}};
  std::uint64_t seq = 5;
  for (const auto& [removed, added] : shapes) {
    const CommitResult result = commit_changing(removed, added, seq);
    v1::Diff diff = diff_of_commit("harbour", result, seq, seq - 2, seq % 2 == 0, seq * 10,
                                   recycler.take());
    EXPECT_EQ(diff.SerializeAsString(), fresh_bytes(result, seq)) << removed << " " << added;
    v1::Diff other = diff_of_commit("quay", commit_changing(1, 2, 3), 2, 1, false, 0,
                                    recycler.take());
    recycler.give(std::move(other));
    recycler.give(std::move(diff));
    seq += 3;
  }
}

TEST(DiffRecycler, KeepsPairMessagesForReuse) {
  DiffRecycler recycler;
  recycler.give(diff_of_commit("harbour", commit_changing(30, 12, 1), 2, 1, false, 0));
  const v1::Diff taken = recycler.take();
  EXPECT_EQ(taken.ByteSizeLong(), 0u);  // empty, as a new message
  EXPECT_EQ(taken.removed_size(), 0);
  EXPECT_EQ(taken.removed().ClearedCount(), 30);  // held, filled again by add_removed()
  EXPECT_EQ(taken.added().ClearedCount(), 12);
  EXPECT_EQ(recycler.kept(), 0u);
}

TEST(DiffRecycler, KeepsFewAndSmallDiffs) {
  DiffRecycler recycler;
  for (std::size_t i = 0; i < DiffRecycler::kMaxKept + 3; ++i) {
    recycler.give(diff_of_commit("harbour", commit_changing(2, 2, i), 2, 1, false, 0));
  }
  EXPECT_EQ(recycler.kept(), DiffRecycler::kMaxKept);
  for (std::size_t i = 0; i < DiffRecycler::kMaxKept; ++i) (void)recycler.take();
  EXPECT_EQ(recycler.kept(), 0u);
  const auto big = static_cast<std::size_t>(DiffRecycler::kMaxKeptPairs);
  recycler.give(diff_of_commit("harbour", commit_changing(big / 2, big / 2 + 1, 1), 2, 1, false,
                               0));
  EXPECT_EQ(recycler.kept(), 0u);  // a base graph's diff is freed
  const v1::Diff fresh = recycler.take();  // nothing kept: a new message
  EXPECT_EQ(fresh.removed().ClearedCount(), 0);
}

// Each window's diffs without the repair's duration (a clock reading).
std::vector<std::string> timeless_bytes(const std::vector<v1::Diff>& diffs) {
  std::vector<std::string> bytes;
  for (v1::Diff diff : diffs) {
    diff.mutable_timings()->set_repair_us(0);
    bytes.push_back(diff.SerializeAsString());
  }
  return bytes;
}

TEST(DiffRecycler, ServiceGivenItsDiffsBackPublishesTheSameDiffs) {
  testing::ScriptSpec spec;
  spec.windows = 30;
  spec.max_batches_per_window = 6;
  spec.max_events_per_batch = 8;
  const std::vector<testing::ScriptWindow> script = testing::random_script(spec, 1441);
  testing::ServiceHarness plain;
  testing::ServiceHarness recycling;
  std::size_t pairs_changed = 0;
  for (std::size_t w = 0; w < script.size(); ++w) {
    for (const testing::ScriptBatch& batch : script[w]) {
      ASSERT_FALSE(plain.offer(batch.events, batch.header).has_value());
      ASSERT_FALSE(recycling.offer(batch.events, batch.header).has_value());
    }
    const testing::WindowResult expected = plain.close();
    testing::WindowResult got = recycling.close();
    ASSERT_EQ(timeless_bytes(got.diffs), timeless_bytes(expected.diffs)) << "window " << w;
    for (v1::Diff& diff : got.diffs) {
      pairs_changed += static_cast<std::size_t>(diff.removed_size() + diff.added_size());
      recycling.service().reuse_diff(std::move(diff));
    }
  }
  EXPECT_GT(pairs_changed, 2 * spec.windows);  // the diffs were not all empty
  for (const std::string& pool : spec.pools) {
    EXPECT_EQ(testing::view_of(recycling.service(), pool), testing::view_of(plain.service(), pool));
    EXPECT_TRUE(testing::pool_certified(*recycling.service().registry().find(pool))) << pool;
  }
}

}  // namespace
}  // namespace yoke::daemon
