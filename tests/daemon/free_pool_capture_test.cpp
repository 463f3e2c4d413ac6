// A background snapshot saves a free pool's engine on the pool's strand (a capture-only job),
// not on the loop: a window of that pool sealed meanwhile is staged only after the capture, the
// snapshot holds the state before that window, its records are those a synchronous snapshot
// taken at the same position holds, and a restart from it recovers the live state.
//
// Sources of the expected values: a synchronous snapshot of the same service at the same
// moment (capture_snapshot, the path requested snapshots keep) for the records; the live
// service for the state after recovery (recovery must give the state the daemon had); the
// certificate checker for every restored pool.
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/server/background_snapshot.h"
#include "daemon/service/pool_service.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "manual_repairs.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::ManualRepairs;
using testing::ServiceHarness;
using testing::view_of;
using testing::wire_add;
using testing::wire_set;

// A record as a snapshot file holds it, but for the wall time it was started at.
std::string without_wall_time(v1::SnapshotRecord record) {
  record.clear_wall_time_unix_us();
  return record.SerializeAsString();
}

// Two pools applied, free, behind held repairs; a background snapshot wired to the service's
// collect listener, writing into the harness's snapshot directory.
class FreePoolCapture : public ::testing::Test {
 protected:
  FreePoolCapture() : store_(harness_.snapshot_dir(), 10) {
    service().set_repair_executor(&repairs_);
    service().set_collect_listener(
        [this](const std::string& pool, PoolService::EngineCapture* engine) {
          snapshot_.pool_collected(pool, engine);
        });
    EXPECT_FALSE(harness_.offer({wire_add(1), wire_add(2), wire_add(3), wire_set(1, 2, 5),
                                 wire_set(2, 3, 4)},
                                from_client("a", 1, "A")));
    EXPECT_FALSE(harness_.offer({wire_add(1), wire_add(2), wire_set(1, 2, 7)},
                                from_client("b", 1, "B")));
    EXPECT_EQ(service().seal().size(), 2u);
    service().start_apply();
    repairs_.release("A");
    repairs_.release("B");
    service().finish_repairs();
  }
  ~FreePoolCapture() override {
    service().set_collect_listener(nullptr);
    snapshot_.wait_written();
  }

  PoolService& service() { return harness_.service(); }

  ServiceHarness harness_;
  ManualRepairs repairs_;
  SnapshotDirectory store_;
  BackgroundSnapshot snapshot_{harness_.service(), store_, [] {}};
};

TEST_F(FreePoolCapture, AWindowSealedDuringTheCaptureIsStagedAfterItAndLeftOutOfTheSnapshot) {
  const std::vector<v1::SnapshotRecord> synchronous = capture_snapshot(service());
  const testing::PoolView a_before = view_of(service(), "A");

  snapshot_.start();
  // Nothing saved on this thread: each pool's capture waits on its strand, and counts as a
  // repair in flight.
  EXPECT_TRUE(snapshot_.capturing());
  EXPECT_EQ(repairs_.queued("A"), 1u);
  EXPECT_EQ(repairs_.queued("B"), 1u);
  EXPECT_TRUE(service().repairing("A"));

  // A's next batch is checked and acknowledged meanwhile (the loop only reads the pool), and
  // its window is handed over behind the capture: stage and repair queue after it.
  EXPECT_FALSE(harness_.offer({wire_add(4), wire_set(3, 4, 9)}, from_client("a", 2, "A")));
  EXPECT_EQ(service().held_batches(), 0u);
  const auto acks = service().seal();
  ASSERT_EQ(acks.size(), 1u);
  ASSERT_TRUE(acks[0].second.has_accepted());
  EXPECT_EQ(acks[0].second.accepted().seq(), 2u);
  service().start_apply();
  EXPECT_EQ(repairs_.queued("A"), 3u);

  // The capture runs first; the pool is still as it was before the window.
  ASSERT_TRUE(repairs_.release_one("A"));
  EXPECT_EQ(service().registry().find("A")->vertex_count(), a_before.vertices);
  PoolService::RepairsDone done = service().finish_repairs();
  EXPECT_TRUE(done.diffs.empty());  // a capture publishes nothing
  EXPECT_TRUE(service().repairing("A"));  // the window, still in flight
  EXPECT_EQ(service().progress("A")->seq, 1u);

  repairs_.release("B");
  service().finish_repairs();
  EXPECT_FALSE(snapshot_.capturing());
  snapshot_.wait_written();
  const std::optional<BackgroundSnapshot::Written> written = snapshot_.take_result();
  ASSERT_TRUE(written.has_value());
  ASSERT_FALSE(written->failure);

  // Then the window: staged and repaired after the capture.
  EXPECT_EQ(repairs_.release("A"), 2u);
  done = service().finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_EQ(done.diffs[0].seq(), 2u);
  EXPECT_EQ(service().progress("A")->seq, 2u);
  EXPECT_EQ(service().registry().find("A")->weight(), 5 + 9);

  // The file holds the records a synchronous snapshot at the start held: A before the window.
  const storage::SnapshotContents contents = store_.read(written->position);
  ASSERT_EQ(contents.pools.size(), synchronous.size());
  for (std::size_t i = 0; i < synchronous.size(); ++i) {
    EXPECT_EQ(without_wall_time(contents.pools[i]), without_wall_time(synchronous[i]))
        << synchronous[i].pool();
    const std::unique_ptr<Pool> restored = restore_checked(contents.pools[i]);
    EXPECT_TRUE(testing::pool_certified(*restored)) << synchronous[i].pool();
  }
  EXPECT_EQ(contents.pools[0].seq(), 1u);
  EXPECT_EQ(contents.pools[0].weight(), a_before.weight);

  // A restart loads it and replays A's window after it: the live state again.
  const testing::PoolView a_live = view_of(service(), "A");
  const testing::PoolView b_live = view_of(service(), "B");
  const RecoveryReport report = harness_.restart(10);
  EXPECT_EQ(report.snapshot_position, written->position);
  EXPECT_EQ(view_of(harness_.service(), "A"), a_live);
  EXPECT_EQ(view_of(harness_.service(), "B"), b_live);
}

TEST_F(FreePoolCapture, ARetirementWaitsForItsPoolsCapture) {
  snapshot_.start();
  EXPECT_FALSE(service().offer(90, testing::retire_message("A")));
  EXPECT_EQ(service().held_batches(), 1u);  // the capture holds the engine it would drop
  repairs_.release("A");
  repairs_.release("B");
  service().finish_repairs();
  EXPECT_EQ(service().held_batches(), 0u);
  EXPECT_TRUE(service().retire_waiting());
  service().seal();
  service().start_apply();
  service().finish_repairs();
  EXPECT_EQ(service().registry().find("A"), nullptr);

  snapshot_.wait_written();
  const std::optional<BackgroundSnapshot::Written> written = snapshot_.take_result();
  ASSERT_TRUE(written.has_value());
  const storage::SnapshotContents contents = store_.read(written->position);
  ASSERT_EQ(contents.pools.size(), 2u);  // A still there at the snapshot's position
  EXPECT_EQ(contents.pools[0].pool(), "A");
}

// A pool with two windows in flight at the start is saved by its last repair's worker; both
// repairs collected by one finish_repairs() give the record of the pool after both (the seq
// and the engine of the same window), as a synchronous snapshot then holds it.
TEST_F(FreePoolCapture, APoolsRepairsCollectedTogetherGiveTheLastOnesState) {
  EXPECT_FALSE(harness_.offer({wire_add(4), wire_set(3, 4, 9)}, from_client("a", 2, "A")));
  service().seal();
  service().start_apply();
  ASSERT_TRUE(repairs_.release_one("A"));  // window 2 staged: the next batch is checked
  EXPECT_FALSE(harness_.offer({wire_add(5), wire_set(4, 5, 11)}, from_client("a", 3, "A")));
  EXPECT_EQ(service().held_batches(), 0u);
  service().seal();
  service().start_apply();
  EXPECT_EQ(repairs_.queued("A"), 3u);  // window 2's repair, window 3's stage and repair

  snapshot_.start();
  EXPECT_EQ(repairs_.queued("A"), 3u);  // asked of the last repair: no job of its own
  repairs_.release("A");
  repairs_.release("B");
  EXPECT_EQ(service().finish_repairs().diffs.size(), 2u);
  EXPECT_EQ(service().progress("A")->seq, 3u);
  const std::vector<v1::SnapshotRecord> synchronous = capture_snapshot(service());

  snapshot_.wait_written();
  const std::optional<BackgroundSnapshot::Written> written = snapshot_.take_result();
  ASSERT_TRUE(written.has_value());
  ASSERT_FALSE(written->failure);
  const storage::SnapshotContents contents = store_.read(written->position);
  ASSERT_EQ(contents.pools.size(), synchronous.size());
  for (std::size_t i = 0; i < synchronous.size(); ++i) {
    EXPECT_EQ(without_wall_time(contents.pools[i]), without_wall_time(synchronous[i]))
        << synchronous[i].pool();
  }
  EXPECT_EQ(contents.pools[0].seq(), 3u);
}

// With the inline executor nothing runs off the caller's thread: the free pools are saved at
// start(), and the snapshot is written at once.
TEST(FreePoolCaptureInline, SavesAtStartWithTheInlineExecutor) {
  ServiceHarness harness;
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 3)},
                             from_client("c", 1, "C")));
  harness.close();
  EXPECT_FALSE(harness.service().capture_on_worker("C"));
  SnapshotDirectory store(harness.snapshot_dir(), 2);
  BackgroundSnapshot snapshot(harness.service(), store, [] {});
  snapshot.start();
  EXPECT_FALSE(snapshot.capturing());
  EXPECT_FALSE(harness.service().repairing("C"));
  snapshot.wait_written();
  const std::optional<BackgroundSnapshot::Written> written = snapshot.take_result();
  ASSERT_TRUE(written.has_value());
  ASSERT_EQ(written->pool_seqs.size(), 1u);
  EXPECT_EQ(written->pool_seqs[0].second, 1u);
}

}  // namespace
}  // namespace yoke::daemon
