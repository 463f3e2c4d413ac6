// One pool's snapshots and one pool's drop in cluster mode, on a real three-node cluster: a
// store of one pool lives on "<prefix>.snap.<token>.<P>" apart from the whole installation's
// and from other pools', keeps its newest few, holds that pool alone; drop_pool_before purges
// one pool's groups, its claims and the other pools' groups stay.
#include <stdexcept>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/cluster/subject_list.h"
#include "daemon/jetstream/jetstream_snapshot_store.h"
#include "daemon/jetstream/pool_claims.h"
#include "tests/jetstream/ownership_fixture.h"

namespace yoke::jetstream::testing {
namespace {

v1::SnapshotRecord snapshot_of(const std::string& pool, std::uint64_t at_seq) {
  v1::SnapshotRecord record;
  record.set_pool(pool);
  record.set_seq(at_seq);
  return record;
}

TEST_F(OwnershipOnCluster, APoolsSnapshotsLiveApartFromTheInstallationsAndOtherPools) {
  const auto berth = JetStreamSnapshotStore::open(*connection_, settings_, 2, "berth.7");
  const auto dock = JetStreamSnapshotStore::open(*connection_, settings_, 2, "dock");
  const auto whole = JetStreamSnapshotStore::open(*connection_, settings_, 2);
  EXPECT_EQ(berth->pool(), "berth.7");
  EXPECT_NE(berth->describe().find("pool 'berth.7'"), std::string::npos) << berth->describe();
  EXPECT_EQ(berth->write(10, {snapshot_of("berth.7", 4)}),
            settings_.stream + ":" + settings_.subject_prefix + ".snap.berth_2e7.10");
  berth->write(20, {snapshot_of("berth.7", 9)});
  berth->write(30, {snapshot_of("berth.7", 12)});
  dock->write(25, {snapshot_of("dock", 3)});
  whole->write(26, {snapshot_of("berth.7", 10), snapshot_of("dock", 3)});
  EXPECT_EQ(berth->positions(), (std::vector<storage::Position>{30, 20}));
  EXPECT_EQ(berth->oldest_needed(), 20u);
  EXPECT_EQ(dock->positions(), (std::vector<storage::Position>{25}));
  EXPECT_EQ(whole->positions(), (std::vector<storage::Position>{26}));
  const storage::SnapshotContents newest = berth->read(30);
  ASSERT_EQ(newest.pools.size(), 1u);
  EXPECT_EQ(newest.pools[0].pool(), "berth.7");
  EXPECT_EQ(newest.pools[0].seq(), 12u);
  EXPECT_THROW(berth->read(25), storage::LogError);  // dock's position: not berth's
  EXPECT_THROW(berth->write(40, {snapshot_of("dock", 5)}), std::invalid_argument);
  EXPECT_EQ(berth->positions(), (std::vector<storage::Position>{30, 20}));
  // A reopened store of the pool finds its snapshots.
  const auto reopened = JetStreamSnapshotStore::open(*connection_, settings_, 2, "berth.7");
  EXPECT_EQ(reopened->read(20).pools[0].seq(), 9u);
}

TEST_F(OwnershipOnCluster, DroppingOnePoolsGroupsLeavesTheOthersAndTheClaims) {
  const auto log = JetStreamCommitLog::open(*connection_, settings_);
  const ClaimResult claim = claim_pool(*connection_, settings_, "quay", owner("east"), 0, "start");
  ASSERT_TRUE(claim.accepted);
  log->set_epoch("quay", claim.claim_sequence);
  std::vector<storage::CommittedWindow> windows;
  for (std::uint64_t seq = 1; seq <= 3; ++seq) {
    windows.push_back(log->commit({record("quay", seq, "east"), record("dock", seq, "east")}));
  }
  EXPECT_EQ(log->drop_pool_before("quay", windows[2].position), 2u);
  // Whole from just after the last dropped group: a snapshot at "last applied + 1" (below the
  // first stored group, since dock's group took a sequence between) still counts.
  EXPECT_EQ(log->first_position("quay"), windows[1].position + 1);
  EXPECT_LT(log->first_position("quay"), windows[2].position);
  EXPECT_EQ(log->first_position("dock"), windows[0].position + 1);
  EXPECT_EQ(read_all(*log, windows[2].position, "quay").records, (std::vector<std::string>{"quay:3:east"}));
  EXPECT_EQ(read_all(*log, 0, "dock").records.size(), 3u);
  EXPECT_THROW(read_all(*log, windows[1].position, "quay"), storage::LogError);  // missing
  JetStreamView view(*connection_, settings_);
  EXPECT_EQ(pool_ownership(view, "quay").epoch(), claim.claim_sequence);
  EXPECT_THROW(log->drop_pool_before("", 5), std::invalid_argument);
}

}  // namespace
}  // namespace yoke::jetstream::testing
