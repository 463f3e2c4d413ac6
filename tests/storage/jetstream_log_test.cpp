// The JetStream backend's own rules, on a real three-node cluster (jetstream_backend.h): pool
// names that differ only by escaped characters stay apart on the stream, the subjects hold the
// escaped tokens, a pool's reading says "missing" after a drop, continue_from refuses a stream
// with messages, a failed commit refuses the next ones, a view of a stream that is not there.
#include <chrono>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/cluster/log_publisher.h"
#include "daemon/cluster/subject_list.h"
#include "daemon/jetstream/jetstream_snapshot_store.h"
#include "daemon/storage/storage_error.h"
#include "jetstream_backend.h"

namespace yoke::storage::testing {
namespace {

v1::JournalRecord record(const std::string& pool, std::uint64_t seq) {
  v1::JournalRecord r;
  r.set_pool(pool);
  r.set_seq(seq);
  r.set_client_id("barge");
  return r;
}

std::vector<std::string> pools_read(CommitLogView& log, Position from, std::string_view pool) {
  std::vector<std::string> pools;
  const std::unique_ptr<GroupReader> reader = log.read_from(from, pool);
  while (auto group = reader->next()) {
    for (const v1::JournalRecord& r : group->records) pools.push_back(r.pool());
  }
  return pools;
}

std::string what_of(const std::function<void()>& action) {
  try {
    action();
  } catch (const LogError& error) {
    return error.what();
  }
  return "(no LogError)";
}

class JetStreamLog : public ::testing::Test {
 protected:
  static void SetUpTestSuite() { JetStreamBackend::set_up_suite(); }
  static void TearDownTestSuite() { JetStreamBackend::tear_down_suite(); }
  JetStreamBackend backend_;
};

TEST_F(JetStreamLog, PoolsThatDifferOnlyByEscapedCharactersStayApart) {
  const auto log = backend_.open_log();
  const std::vector<std::string> pools = {"berth.7", "berth_7", "berth_2e7", "berth:7.x"};
  std::vector<v1::JournalRecord> window;
  for (const std::string& pool : pools) window.push_back(record(pool, 1));
  const CommittedWindow done = log->commit(window);
  EXPECT_EQ(done.end - done.position, pools.size());  // one message per pool
  for (const std::string& pool : pools) {
    EXPECT_EQ(pools_read(*log, 0, pool), std::vector<std::string>{pool});
    EXPECT_GE(log->first_position(pool), done.position);
    EXPECT_LT(log->first_position(pool), done.end);
  }
  EXPECT_EQ(pools_read(*log, 0, {}), pools);
  EXPECT_EQ(log->first_position("berth"), 0u);
}

TEST_F(JetStreamLog, OnePoolsReadingSaysMissingAfterADrop) {
  const auto log = backend_.open_log();
  std::vector<CommittedWindow> windows;
  for (std::uint64_t seq = 1; seq <= 4; ++seq) {
    windows.push_back(log->commit({record("quay", seq), record("dock", seq)}));
  }
  EXPECT_EQ(log->drop_before(windows[2].position), 4u);
  // Whole from just after dock's last dropped group (window 1's), though quay's group holds
  // that sequence: every dock group at or above it is stored.
  EXPECT_EQ(log->first_position("dock"), windows[2].position);
  EXPECT_NE(what_of([&] { pools_read(*log, windows[1].position, "dock"); }).find("missing"),
            std::string::npos);
  EXPECT_EQ(pools_read(*log, windows[2].position, "dock"),
            (std::vector<std::string>{"dock", "dock"}));
  // From 0: whatever is stored, no complaint.
  EXPECT_EQ(pools_read(*log, 0, "quay").size(), 2u);
}

TEST_F(JetStreamLog, ContinueFromRefusesAStreamThatHoldsMessages) {
  const auto log = backend_.open_log();
  log->commit({record("quay", 1)});
  EXPECT_NE(what_of([&] { log->continue_from(1000); }).find("holds 1 messages"),
            std::string::npos);
  log->continue_from(1);  // behind the end: nothing to do
}

TEST_F(JetStreamLog, AFailedCommitRefusesTheNextOnes) {
  const auto log = backend_.open_log();
  log->commit({record("quay", 1)});
  EXPECT_NE(what_of([&] { log->commit({record("", 2)}); }).find("cannot be stored"),
            std::string::npos);
  EXPECT_NE(what_of([&] { log->commit({record("quay", 2)}); }).find("refuses commits"),
            std::string::npos);
  // Another writer (after a restart) goes on from what is stored.
  const auto again = backend_.open_log();
  EXPECT_GT(again->commit({record("quay", 2)}).position, 0u);
}

TEST_F(JetStreamLog, AViewOfAStreamThatIsNotThereIsALogError) {
  const auto view = backend_.open_view();  // nothing opened the log: no stream
  EXPECT_NE(what_of([&] { view->read_from(0); }).find("contract-"), std::string::npos);
  EXPECT_NE(what_of([&] { view->first_position(); }).find("contract-"), std::string::npos);
}

TEST_F(JetStreamLog, ASnapshotIsChunksOfAtMostHalfAMebibyteThenAManifest) {
  const auto store = backend_.open_snapshots(2);
  v1::SnapshotRecord pool;
  pool.set_pool("berth.7");
  pool.set_seq(3);
  pool.set_engine_state(std::string(1200 * 1024, 'w'));  // 2.3 chunks
  store->write(30, {pool});
  const std::string prefix = backend_.settings().subject_prefix;
  const auto subjects = cluster::subjects_with_messages(
      JetStreamBackend::connection(), backend_.settings().stream, prefix + ".snap.*");
  ASSERT_EQ(subjects.size(), 1u);
  EXPECT_EQ(subjects[0].first, prefix + ".snap.30");
  EXPECT_EQ(subjects[0].second, 3u + 1u);  // three chunks and the manifest
  // A write cut short: a chunk and no manifest. Listed (reading tells), damaged, and the older
  // snapshot still reads.
  cluster::publish_and_wait(JetStreamBackend::connection(), prefix + ".snap.40",
                            {{"Yoke-Snapshot-Chunk", "0"}}, "part", std::chrono::seconds(5));
  EXPECT_EQ(store->positions(), (std::vector<Position>{40, 30}));
  EXPECT_THROW(store->read(40), SnapshotDamage);
  const SnapshotContents back = store->read(30);
  ASSERT_EQ(back.pools.size(), 1u);
  EXPECT_EQ(back.pools[0].SerializeAsString(), pool.SerializeAsString());
}

}  // namespace
}  // namespace yoke::storage::testing
