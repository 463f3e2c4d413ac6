// The snapshot store's contract (daemon/storage/snapshot_store.h), written once and run against
// every backend in SnapshotBackends: snapshots written, listed newest first, read back whole,
// pruned to the newest kept, kept across a reopen; a damaged newest one falls back to the older
// one; a missing one; one larger than a replicated log's message.
//
// Sources of the expected values: the contract in snapshot_store.h; the records each test
// writes (what goes in must come back byte for byte).
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/storage/storage_error.h"
#include "storage_backends.h"

namespace yoke::storage::testing {
namespace {

// A pool's record; the store treats engine_state as opaque bytes.
v1::SnapshotRecord pool_record(const std::string& pool, std::uint64_t seq,
                               std::size_t state_bytes = 64) {
  v1::SnapshotRecord record;
  record.set_pool(pool);
  record.set_seq(seq);
  record.set_weight(static_cast<std::int64_t>(seq) * 7 - 20);
  record.set_pairs(seq % 5);
  record.set_engine_state_format(1);
  std::string state(state_bytes, '\0');
  for (std::size_t i = 0; i < state_bytes; ++i) {
    state[i] = static_cast<char>((i * 131 + seq) % 251);
  }
  record.set_engine_state(state);
  return record;
}

std::vector<std::string> serialized(const std::vector<v1::SnapshotRecord>& pools) {
  std::vector<std::string> out;
  for (const v1::SnapshotRecord& pool : pools) out.push_back(pool.SerializeAsString());
  return out;
}

// The newest snapshot that reads back, as recovery looks for it.
std::optional<Position> newest_readable(const SnapshotStore& store) {
  for (const Position position : store.positions()) {
    try {
      store.read(position);
      return position;
    } catch (const SnapshotDamage&) {
    } catch (const LogError&) {
    }
  }
  return std::nullopt;
}

template <typename Backend>
class SnapshotStoreContract : public ::testing::Test {
 protected:
  static void SetUpTestSuite() { Backend::set_up_suite(); }
  static void TearDownTestSuite() { Backend::tear_down_suite(); }

  Backend backend_;
};

TYPED_TEST_SUITE(SnapshotStoreContract, SnapshotBackends, BackendName);

TYPED_TEST(SnapshotStoreContract, EmptyStoreHoldsNothing) {
  const auto store = this->backend_.open_snapshots(2);
  EXPECT_FALSE(store->describe().empty());
  EXPECT_TRUE(store->positions().empty());
  EXPECT_FALSE(store->oldest_needed().has_value());
  EXPECT_THROW(store->read(5), LogError);
}

TYPED_TEST(SnapshotStoreContract, WrittenSnapshotsAreListedNewestFirstAndReadBackWhole) {
  const auto store = this->backend_.open_snapshots(3);
  const std::vector<v1::SnapshotRecord> older = {pool_record("dock", 3), pool_record("quay", 9)};
  const std::vector<v1::SnapshotRecord> newer = {pool_record("dock", 5), pool_record("ferry", 1),
                                                 pool_record("quay", 12)};
  EXPECT_FALSE(store->write(10, older).empty());
  EXPECT_FALSE(store->write(25, newer).empty());
  EXPECT_EQ(store->positions(), (std::vector<Position>{25, 10}));
  EXPECT_EQ(store->oldest_needed(), 10u);
  const SnapshotContents read_newer = store->read(25);
  EXPECT_EQ(read_newer.position, 25u);
  EXPECT_EQ(serialized(read_newer.pools), serialized(newer));
  EXPECT_EQ(serialized(store->read(10).pools), serialized(older));
  // A snapshot of no pools (a daemon that holds none yet) is a snapshot too.
  store->write(30, {});
  EXPECT_TRUE(store->read(30).pools.empty());
  EXPECT_EQ(store->positions(), (std::vector<Position>{30, 25, 10}));
}

TYPED_TEST(SnapshotStoreContract, OnlyTheNewestKeptRemain) {
  const auto store = this->backend_.open_snapshots(2);
  for (const Position position : {10u, 20u, 30u}) {
    store->write(position, {pool_record("quay", position)});
  }
  EXPECT_EQ(store->positions(), (std::vector<Position>{30, 20}));
  EXPECT_EQ(store->oldest_needed(), 20u);
  EXPECT_THROW(store->read(10), LogError);
  EXPECT_EQ(store->read(20).pools.at(0).seq(), 20u);
}

TYPED_TEST(SnapshotStoreContract, SnapshotsSurviveAReopen) {
  {
    const auto store = this->backend_.open_snapshots(2);
    store->write(7, {pool_record("quay", 2)});
    store->write(11, {pool_record("quay", 4)});
  }
  const auto store = this->backend_.open_snapshots(2);
  EXPECT_EQ(store->positions(), (std::vector<Position>{11, 7}));
  EXPECT_EQ(serialized(store->read(11).pools), serialized({pool_record("quay", 4)}));
  EXPECT_EQ(store->oldest_needed(), 7u);
}

TYPED_TEST(SnapshotStoreContract, DamagedNewestFallsBackToTheOlderOne) {
  const auto store = this->backend_.open_snapshots(2);
  store->write(10, {pool_record("quay", 3)});
  store->write(20, {pool_record("quay", 6)});
  this->backend_.damage_snapshot(20);
  // Still listed (reading tells), and still needed by nothing older than it.
  EXPECT_EQ(store->positions(), (std::vector<Position>{20, 10}));
  EXPECT_THROW(store->read(20), SnapshotDamage);
  EXPECT_EQ(newest_readable(*store), 10u);
  EXPECT_EQ(serialized(store->read(10).pools), serialized({pool_record("quay", 3)}));
  // Both damaged: nothing to start from.
  this->backend_.damage_snapshot(10);
  EXPECT_FALSE(newest_readable(*store).has_value());
}

TYPED_TEST(SnapshotStoreContract, MissingSnapshotIsNotListedAndCannotBeRead) {
  const auto store = this->backend_.open_snapshots(2);
  store->write(10, {pool_record("quay", 3)});
  store->write(20, {pool_record("quay", 6)});
  this->backend_.remove_snapshot(20);
  EXPECT_EQ(store->positions(), (std::vector<Position>{10}));
  EXPECT_THROW(store->read(20), LogError);
  EXPECT_EQ(newest_readable(*store), 10u);
  EXPECT_EQ(store->oldest_needed(), 10u);
}

TYPED_TEST(SnapshotStoreContract, LargeSnapshotReadsBackWhole) {
  // Larger than one message of a replicated log (1 MiB by default): a backend that stores
  // snapshots as messages must split and join them.
  const auto store = this->backend_.open_snapshots(2);
  const std::vector<v1::SnapshotRecord> pools = {pool_record("quay", 40, 3 << 20),
                                                 pool_record("dock", 41, 100)};
  store->write(1000, pools);
  EXPECT_EQ(serialized(store->read(1000).pools), serialized(pools));
}

}  // namespace
}  // namespace yoke::storage::testing
