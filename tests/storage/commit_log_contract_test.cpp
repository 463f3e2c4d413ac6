// The commit log's contract (daemon/storage/commit_log.h), written once and run against every
// backend in StorageBackends: windows committed and read back as commit groups, positions
// after a reopen, reading from a position and one pool, dropping old entries, moving an empty
// log forward, a read-only view, entries that are not records.
//
// Sources of the expected values: the contract in commit_log.h; the windows each test commits
// (what goes in must come back, grouped per pool and window, in order).
#include <algorithm>
#include <cstdint>
#include <optional>
#include <ostream>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/storage/storage_error.h"
#include "storage_backends.h"
#include "yoke/v1/events.pb.h"

namespace yoke::storage::testing {
namespace {

// A window's batch: pool, the pool's seq, how many events.
struct Batch {
  std::string pool;
  std::uint64_t seq;
  int events;
};
using Window = std::vector<Batch>;

v1::JournalRecord record_of(const Batch& batch) {
  v1::JournalRecord record;
  record.set_pool(batch.pool);
  record.set_seq(batch.seq);
  record.set_client_id("van-" + std::to_string(batch.seq % 3));
  record.set_client_batch(100 + batch.seq);
  for (int i = 0; i < batch.events; ++i) {
    v1::Event& event = *record.add_events();
    event.set_kind(v1::Event::ADD_VERTEX);
    event.set_u(batch.seq * 100 + static_cast<std::uint64_t>(i));
  }
  return record;
}

std::vector<v1::JournalRecord> records_of(const Window& window) {
  std::vector<v1::JournalRecord> records;
  for (const Batch& batch : window) records.push_back(record_of(batch));
  return records;
}

// A group as the tests compare it: pool, then each record's seq, client mark and events.
struct GroupView {
  std::string pool;
  std::vector<std::string> records;
  friend bool operator==(const GroupView&, const GroupView&) = default;
};

void PrintTo(const GroupView& group, std::ostream* out) {
  *out << group.pool << ":";
  for (const std::string& record : group.records) *out << " {" << record << "}";
}

std::string record_text(v1::JournalRecord record) {
  record.clear_window_start();  // the backend's own (commit_log.h)
  record.clear_wall_time_unix_us();
  return record.ShortDebugString();
}

// What a window must read back as: one group per pool in order of first appearance.
std::vector<GroupView> groups_of_window(const Window& window) {
  std::vector<GroupView> groups;
  for (const Batch& batch : window) {
    auto it = std::find_if(groups.begin(), groups.end(),
                           [&batch](const GroupView& g) { return g.pool == batch.pool; });
    if (it == groups.end()) it = groups.insert(groups.end(), GroupView{batch.pool, {}});
    it->records.push_back(record_text(record_of(batch)));
  }
  return groups;
}

std::vector<GroupView> expected_groups(const std::vector<Window>& windows,
                                       const std::string& only_pool = "") {
  std::vector<GroupView> all;
  for (const Window& window : windows) {
    for (GroupView& group : groups_of_window(window)) {
      if (only_pool.empty() || group.pool == only_pool) all.push_back(std::move(group));
    }
  }
  return all;
}

struct ReadBack {
  std::vector<GroupView> groups;
  std::vector<Position> positions;
  std::optional<std::string> stopped_early;
};

ReadBack read_all(CommitLogView& log, Position from, std::string_view pool = {}) {
  ReadBack out;
  const std::unique_ptr<GroupReader> reader = log.read_from(from, pool);
  while (auto group = reader->next()) {
    GroupView view{group->pool, {}};
    for (const v1::JournalRecord& record : group->records) {
      EXPECT_EQ(record.pool(), group->pool);
      view.records.push_back(record_text(record));
    }
    out.groups.push_back(std::move(view));
    out.positions.push_back(group->position);
  }
  out.stopped_early = reader->stopped_early();
  return out;
}

// Four windows over three pools: several pools per window, a pool with several batches in one
// window, windows of one batch.
std::vector<Window> sample_windows() {
  return {
      {{"quay", 1, 2}, {"dock", 1, 1}, {"quay", 2, 3}},
      {{"dock", 2, 1}},
      {{"ferry", 1, 4}, {"quay", 3, 1}, {"dock", 3, 2}, {"dock", 4, 1}},
      {{"quay", 4, 1}, {"quay", 5, 2}},
  };
}

template <typename Backend>
class CommitLogContract : public ::testing::Test {
 protected:
  static void SetUpTestSuite() { Backend::set_up_suite(); }
  static void TearDownTestSuite() { Backend::tear_down_suite(); }

  // Commits each window, checking what commit() says; returns what each returned.
  std::vector<CommittedWindow> commit_all(CommitLog& log, const std::vector<Window>& windows) {
    std::vector<CommittedWindow> committed;
    for (const Window& window : windows) {
      const Position end_before = log.end_position();
      const CommittedWindow done = log.commit(records_of(window));
      EXPECT_GE(done.position, end_before);
      EXPECT_GT(done.end, done.position);
      EXPECT_EQ(done.end, log.end_position());
      committed.push_back(done);
    }
    return committed;
  }

  Backend backend_;
};

TYPED_TEST_SUITE(CommitLogContract, StorageBackends, BackendName);

TYPED_TEST(CommitLogContract, EmptyLogHoldsNothing) {
  const auto log = this->backend_.open_log();
  EXPECT_GE(log->end_position(), 1u);
  EXPECT_EQ(log->first_position(), 0u);
  EXPECT_TRUE(read_all(*log, 0).groups.empty());
  EXPECT_TRUE(read_all(*log, 1).groups.empty());
  EXPECT_FALSE(read_all(*log, 1).stopped_early.has_value());
  // An empty window stores nothing.
  const Position end = log->end_position();
  const CommittedWindow none = log->commit({});
  EXPECT_EQ(none.position, 0u);
  EXPECT_EQ(none.end, end);
  EXPECT_EQ(log->end_position(), end);
  EXPECT_TRUE(read_all(*log, 0).groups.empty());
}

TYPED_TEST(CommitLogContract, WindowsReadBackAsGroupsInOrder) {
  const auto log = this->backend_.open_log();
  const std::vector<Window> windows = sample_windows();
  const std::vector<CommittedWindow> committed = this->commit_all(*log, windows);
  for (std::size_t i = 1; i < committed.size(); ++i) {
    EXPECT_GE(committed[i].position, committed[i - 1].end);
  }
  EXPECT_GT(log->first_position(), 0u);
  EXPECT_LE(log->first_position(), committed[0].position);

  const ReadBack back = read_all(*log, 0);
  EXPECT_EQ(back.groups, expected_groups(windows));
  // Each group's position lies in its window's range [position, end).
  std::size_t g = 0;
  for (std::size_t w = 0; w < windows.size(); ++w) {
    for (std::size_t k = 0; k < groups_of_window(windows[w]).size(); ++k, ++g) {
      ASSERT_LT(g, back.positions.size());
      EXPECT_GE(back.positions[g], committed[w].position) << "window " << w;
      EXPECT_LT(back.positions[g], committed[w].end) << "window " << w;
    }
  }
  // From position 1 (nothing dropped) reads the same.
  EXPECT_EQ(read_all(*log, 1).groups, back.groups);
}

TYPED_TEST(CommitLogContract, PositionsSurviveAReopen) {
  const std::vector<Window> windows = sample_windows();
  const std::vector<Window> first(windows.begin(), windows.begin() + 2);
  const std::vector<Window> second(windows.begin() + 2, windows.end());
  Position end = 0;
  ReadBack before;
  {
    const auto log = this->backend_.open_log();
    this->commit_all(*log, first);
    end = log->end_position();
    before = read_all(*log, 0);
  }
  const auto log = this->backend_.open_log();
  EXPECT_EQ(log->end_position(), end);
  const ReadBack again = read_all(*log, 0);
  EXPECT_EQ(again.groups, before.groups);
  EXPECT_EQ(again.positions, before.positions);
  const std::vector<CommittedWindow> more = this->commit_all(*log, second);
  EXPECT_GE(more.front().position, end);
  EXPECT_EQ(read_all(*log, 0).groups, expected_groups(windows));
}

TYPED_TEST(CommitLogContract, ReadingFromAPositionSkipsTheWindowsBelowIt) {
  const auto log = this->backend_.open_log();
  const std::vector<Window> windows = sample_windows();
  const std::vector<CommittedWindow> committed = this->commit_all(*log, windows);
  for (std::size_t w = 0; w < windows.size(); ++w) {
    SCOPED_TRACE("from window " + std::to_string(w));
    const std::vector<Window> rest(windows.begin() + static_cast<std::ptrdiff_t>(w), windows.end());
    // A snapshot after window w - 1 is named by its end; the next window starts at or after it.
    const Position snapshot = w == 0 ? committed[0].position : committed[w - 1].end;
    EXPECT_EQ(read_all(*log, snapshot).groups, expected_groups(rest));
    EXPECT_EQ(read_all(*log, committed[w].position).groups, expected_groups(rest));
  }
  EXPECT_TRUE(read_all(*log, log->end_position()).groups.empty());
}

TYPED_TEST(CommitLogContract, ReadingOnePool) {
  const auto log = this->backend_.open_log();
  const std::vector<Window> windows = sample_windows();
  const std::vector<CommittedWindow> committed = this->commit_all(*log, windows);
  for (const std::string pool : {"quay", "dock", "ferry"}) {
    SCOPED_TRACE(pool);
    EXPECT_EQ(read_all(*log, 0, pool).groups, expected_groups(windows, pool));
    const std::vector<Window> rest(windows.begin() + 2, windows.end());
    EXPECT_EQ(read_all(*log, committed[2].position, pool).groups, expected_groups(rest, pool));
  }
  EXPECT_TRUE(read_all(*log, 0, "nowhere").groups.empty());
}

TYPED_TEST(CommitLogContract, DroppingOldEntriesKeepsEverythingFromThePosition) {
  // Enough windows to fill several storage units.
  std::vector<Window> windows;
  for (std::uint64_t i = 1; i <= 40; ++i) {
    windows.push_back({{"quay", i, 3}, {i % 2 == 0 ? "dock" : "ferry", (i + 1) / 2, 2}});
  }
  Position keep_from = 0;
  Position end = 0;
  std::vector<Window> kept;
  {
    const auto log = this->backend_.open_log();
    const std::vector<CommittedWindow> committed = this->commit_all(*log, windows);
    keep_from = committed[30].position;
    kept.assign(windows.begin() + 30, windows.end());
    EXPECT_GT(log->drop_before(keep_from), 0u);
    EXPECT_GT(log->first_position(), 1u);
    EXPECT_LE(log->first_position(), keep_from);
    EXPECT_EQ(read_all(*log, keep_from).groups, expected_groups(kept));
    // What was dropped cannot be read as if it were whole.
    try {
      read_all(*log, 1);
      ADD_FAILURE() << "read_from(1) after dropping entries did not throw";
    } catch (const LogError& error) {
      EXPECT_NE(std::string(error.what()).find("missing"), std::string::npos) << error.what();
    }
    // Everything below the end may go (a snapshot covers it all): the positions go on.
    log->drop_before(log->end_position());
    end = log->end_position();
  }
  const auto log = this->backend_.open_log();
  EXPECT_EQ(log->end_position(), end);
  const CommittedWindow next = log->commit(records_of({{"quay", 41, 1}}));
  EXPECT_GE(next.position, end);
  EXPECT_EQ(read_all(*log, next.position).groups, groups_of_window({{"quay", 41, 1}}));
}

TYPED_TEST(CommitLogContract, ContinueFromMovesTheNextWindowForward) {
  Position end = 0;
  {
    const auto log = this->backend_.open_log();
    log->continue_from(50);
    EXPECT_GE(log->end_position(), 50u);
    const CommittedWindow done = log->commit(records_of({{"quay", 7, 1}}));
    EXPECT_GE(done.position, 50u);
    log->continue_from(10);  // behind it: no effect
    EXPECT_EQ(log->end_position(), done.end);
    end = done.end;
  }
  const auto log = this->backend_.open_log();
  EXPECT_EQ(log->end_position(), end);
  EXPECT_EQ(read_all(*log, 50).groups, groups_of_window({{"quay", 7, 1}}));
}

TYPED_TEST(CommitLogContract, AViewReadsWhatTheWriterCommitted) {
  const auto log = this->backend_.open_log();
  const std::vector<Window> windows = sample_windows();
  const std::vector<CommittedWindow> committed = this->commit_all(*log, windows);
  const auto view = this->backend_.open_view();
  EXPECT_FALSE(view->describe().empty());
  EXPECT_EQ(view->first_position(), log->first_position());
  const ReadBack seen = read_all(*view, 0);
  EXPECT_EQ(seen.groups, expected_groups(windows));
  EXPECT_EQ(seen.positions, read_all(*log, 0).positions);
  EXPECT_EQ(read_all(*view, committed[3].position, "quay").groups,
            expected_groups(std::vector<Window>{windows[3]}, "quay"));
  EXPECT_FALSE(seen.stopped_early.has_value());
}

TYPED_TEST(CommitLogContract, AnEntryThatIsNotARecordIsDamage) {
  const std::vector<Window> windows = sample_windows();
  {
    const auto log = this->backend_.open_log();
    this->commit_all(*log, windows);
  }
  this->backend_.store_foreign_entry();
  const auto log = this->backend_.open_log();
  const std::unique_ptr<GroupReader> reader = log->read_from(0);
  std::vector<GroupView> before_damage;
  try {
    while (auto group = reader->next()) {
      GroupView view{group->pool, {}};
      for (const v1::JournalRecord& record : group->records) {
        view.records.push_back(record_text(record));
      }
      before_damage.push_back(std::move(view));
    }
    ADD_FAILURE() << "the foreign entry was read without an error";
  } catch (const LogDamage&) {
  }
  // The windows before it were returned first (all but the last window's, which the reader may
  // hold back until it knows the window is over).
  const std::vector<GroupView> expected = expected_groups(windows);
  ASSERT_LE(before_damage.size(), expected.size());
  EXPECT_GE(before_damage.size(), expected.size() - groups_of_window(windows.back()).size());
  for (std::size_t i = 0; i < before_damage.size(); ++i) EXPECT_EQ(before_damage[i], expected[i]);
}

}  // namespace
}  // namespace yoke::storage::testing
