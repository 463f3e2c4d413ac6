// PoolService's seal in two steps (begin_seal(), the log's commit(), end_seal()), as yoked runs
// it with the commit on its journal thread: batches offered while a window syncs join the next
// window, checked on top of the syncing one, and nothing is answered before it is durable.
//
// Sources of the expected values: the one-step seal() on the same batches (same seqs, same
// pools, same journal), the protocol's retry rule (a retry of a batch not yet durable waits),
// the pool limits of the config, and the certificate checker for every pool state.
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/service/pool_service.h"
#include "daemon/service/wire_types.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::in_pool;
using testing::ScriptBatch;
using testing::ScriptWindow;
using testing::ServiceHarness;
using testing::view_of;
using testing::wire_add;
using testing::wire_remove;
using testing::wire_set;

using Replies = std::vector<std::pair<Ticket, v1::Ack>>;

std::map<Ticket, v1::Ack> by_ticket(const Replies& replies) {
  std::map<Ticket, v1::Ack> acks;
  for (const auto& [ticket, ack] : replies) acks[ticket] = ack;
  return acks;
}

// The journal thread's part, here on the test's thread: the window syncing is made durable.
Replies sync_and_end(PoolService& service, std::vector<v1::JournalRecord> records) {
  const storage::CommittedWindow committed = service.log().commit(std::move(records));
  Replies replies = service.end_seal(committed);
  service.start_apply();
  service.wait_repairs();
  PoolService::RepairsDone done = service.finish_repairs();
  for (auto& reply : done.replies) replies.push_back(std::move(reply));
  return replies;
}

class PoolSyncTest : public ::testing::Test {
 protected:
  PoolSyncTest() : harness_(config()) {}

  static DaemonConfig config() {
    DaemonConfig config = testing::test_config({});
    config.pools["tiny"] = testing::tiny_pool_settings();
    return config;
  }

  void TearDown() override {
    EXPECT_FALSE(service().syncing());
    for (const std::string& name : service().registry().names()) {
      EXPECT_TRUE(testing::pool_certified(*service().registry().find(name))) << name;
    }
  }

  PoolService& service() { return harness_.service(); }
  std::optional<v1::Ack> offer_at(Ticket ticket, const std::vector<v1::Event>& events,
                                  const testing::BatchHeader& header = {}) {
    return service().offer(ticket, testing::ingest_message(events, header));
  }

  ServiceHarness harness_;
};

TEST_F(PoolSyncTest, BatchesDuringASyncAreCheckedOnTopOfTheSyncingWindow) {
  ASSERT_FALSE(offer_at(1, {wire_add(1), wire_add(2), wire_set(1, 2, 5)}));
  std::vector<v1::JournalRecord> records = service().begin_seal().complete();
  EXPECT_TRUE(service().syncing());
  EXPECT_TRUE(service().window_empty());
  ASSERT_EQ(records.size(), 1u);

  // Vertices 1 and 2 are only in the syncing window: known to the next window's checks.
  EXPECT_FALSE(offer_at(2, {wire_set(1, 2, 7), wire_add(3)}));
  const auto unknown = offer_at(3, {wire_remove(9)});
  ASSERT_TRUE(unknown && unknown->has_rejected());
  EXPECT_EQ(unknown->rejected().errors(0).code(), v1::Error::UNKNOWN_VERTEX);
  const auto exists = offer_at(4, {wire_add(2)});
  ASSERT_TRUE(exists && exists->has_rejected());
  EXPECT_EQ(exists->rejected().errors(0).code(), v1::Error::VERTEX_EXISTS);
  EXPECT_FALSE(offer_at(5, {wire_set(2, 3, 4)}, in_pool("harbour")));

  // Only the syncing window is answered when it is durable.
  const auto first = by_ticket(sync_and_end(service(), std::move(records)));
  ASSERT_EQ(first.size(), 1u);
  EXPECT_EQ(first.at(1).accepted().seq(), 1u);
  EXPECT_EQ(service().progress("default")->seq, 1u);

  const auto second = by_ticket(service().seal());
  service().apply();
  ASSERT_EQ(second.size(), 2u);
  EXPECT_EQ(second.at(2).accepted().seq(), 2u);
  EXPECT_EQ(second.at(5).accepted().seq(), 1u);
  EXPECT_EQ(view_of(service(), "default").weight, 7);
  EXPECT_EQ(view_of(service(), "default").vertices, 3u);
}

TEST_F(PoolSyncTest, APoolsLimitsCountTheSyncingWindowOnce) {
  ASSERT_FALSE(offer_at(1, {wire_add(1), wire_add(2), wire_add(3)}, in_pool("tiny")));
  std::vector<v1::JournalRecord> records = service().begin_seal().complete();
  EXPECT_FALSE(offer_at(2, {wire_add(4)}, in_pool("tiny")));  // four alive: the limit
  const auto over = offer_at(3, {wire_add(5)}, in_pool("tiny"));
  ASSERT_TRUE(over && over->has_rejected());
  EXPECT_EQ(over->rejected().errors(0).code(), v1::Error::POOL_LIMIT_EXCEEDED);
  sync_and_end(service(), std::move(records));
  // The syncing window is staged now: its three vertices are counted by the pool alone.
  const auto still_over = offer_at(4, {wire_add(5)}, in_pool("tiny"));
  ASSERT_TRUE(still_over && still_over->has_rejected());
  EXPECT_EQ(still_over->rejected().errors(0).code(), v1::Error::POOL_LIMIT_EXCEEDED);
  EXPECT_FALSE(offer_at(5, {wire_remove(1), wire_add(5)}, in_pool("tiny")));
  const auto acks = by_ticket(service().seal());
  service().apply();
  EXPECT_EQ(acks.at(2).accepted().seq(), 2u);
  EXPECT_EQ(acks.at(5).accepted().seq(), 3u);
  EXPECT_EQ(view_of(service(), "tiny").vertices, 4u);
}

TEST_F(PoolSyncTest, ARetryOfASyncingBatchIsAnsweredOnceDurable) {
  ASSERT_FALSE(offer_at(1, {wire_add(1)}, from_client("quay-2", 8)));
  std::vector<v1::JournalRecord> records = service().begin_seal().complete();
  EXPECT_FALSE(offer_at(2, {wire_add(1)}, from_client("quay-2", 8)));  // waits
  EXPECT_TRUE(service().window_empty());
  const auto acks = by_ticket(sync_and_end(service(), std::move(records)));
  ASSERT_EQ(acks.size(), 2u);
  EXPECT_FALSE(acks.at(1).accepted().duplicate());
  EXPECT_TRUE(acks.at(2).accepted().duplicate());
  EXPECT_EQ(acks.at(2).accepted().seq(), 1u);
  // Durable now: answered at once.
  const auto again = offer_at(3, {wire_add(1)}, from_client("quay-2", 8));
  ASSERT_TRUE(again && again->has_accepted());
  EXPECT_TRUE(again->accepted().duplicate());
}

TEST_F(PoolSyncTest, ARetirementWaitsForItsPoolsSyncingWindow) {
  ASSERT_FALSE(offer_at(1, {wire_add(1)}, in_pool("ferry")));
  std::vector<v1::JournalRecord> records = service().begin_seal().complete();
  EXPECT_FALSE(service().offer(2, testing::retire_message("ferry", 1)));
  EXPECT_EQ(service().held_batches(), 1u);
  EXPECT_TRUE(service().window_empty());
  sync_and_end(service(), std::move(records));  // offers it: it joins the window
  EXPECT_EQ(service().held_batches(), 0u);
  EXPECT_TRUE(service().retire_waiting());
  const auto acks = by_ticket(service().seal());
  service().apply();
  EXPECT_EQ(acks.at(2).accepted().seq(), 2u);
  EXPECT_EQ(service().registry().find("ferry"), nullptr);
}

TEST_F(PoolSyncTest, AFailedSyncRefusesTheSyncingWindowThenTheOpenOne) {
  ASSERT_FALSE(offer_at(1, {wire_add(1)}, from_client("tug", 1)));
  std::vector<v1::JournalRecord> records = service().begin_seal().complete();
  ASSERT_FALSE(offer_at(2, {wire_add(2)}, from_client("tug", 2)));
  // The commit failed: nothing is acknowledged.
  const Replies refusals =
      service().refuse_window(make_error(v1::Error::UNAVAILABLE, "the journal failed"));
  ASSERT_EQ(refusals.size(), 2u);
  EXPECT_EQ(refusals[0].first, 1u);
  EXPECT_EQ(refusals[1].first, 2u);
  for (const auto& [ticket, ack] : refusals) {
    EXPECT_EQ(ack.rejected().errors(0).code(), v1::Error::UNAVAILABLE) << ticket;
  }
  EXPECT_FALSE(service().syncing());
  EXPECT_TRUE(service().window_empty());
}

// Random windows, each offered while the one before syncs, end as the one-step seal() ends
// them: the same seqs, pools, journal and recovery.
TEST(PoolSyncScript, OverlappedWindowsEndAsSequentialOnes) {
  for (std::uint64_t seed = 1; seed <= 6; ++seed) {
    const std::vector<ScriptWindow> script = testing::random_script({}, seed);
    ServiceHarness sequential;
    ASSERT_TRUE(testing::run_script(sequential, script)) << seed;

    ServiceHarness overlapped;
    PoolService& service = overlapped.service();
    std::map<Ticket, std::uint64_t> seqs;
    std::optional<std::vector<v1::JournalRecord>> syncing;
    Ticket ticket = 1;
    const auto record = [&](const Replies& replies) {
      for (const auto& [t, ack] : replies) {
        ASSERT_TRUE(ack.has_accepted() && !ack.accepted().duplicate()) << ack.ShortDebugString();
        seqs[t] = ack.accepted().seq();
      }
    };
    for (const ScriptWindow& window : script) {
      for (const ScriptBatch& batch : window) {
        ASSERT_FALSE(service.offer(ticket++, testing::ingest_message(batch.events, batch.header)))
            << seed;
      }
      if (syncing) record(sync_and_end(service, std::move(*syncing)));
      syncing = service.begin_seal().complete();
    }
    record(sync_and_end(service, std::move(*syncing)));
    ASSERT_EQ(seqs.size(), ticket - 1) << seed;

    for (const std::string& pool : sequential.service().registry().names()) {
      EXPECT_EQ(view_of(service, pool), view_of(sequential.service(), pool)) << pool << seed;
      EXPECT_TRUE(testing::pool_certified(*service.registry().find(pool))) << pool << seed;
    }
    EXPECT_EQ(service.next_journal_position(), sequential.service().next_journal_position());
    overlapped.restart();
    for (const std::string& pool : sequential.service().registry().names()) {
      EXPECT_EQ(view_of(overlapped.service(), pool), view_of(sequential.service(), pool))
          << pool << seed;
    }
  }
}

}  // namespace
}  // namespace yoke::daemon
