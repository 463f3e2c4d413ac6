// Retiring pools (RetirePool, ingest.proto): the pool's state goes whole and its slot under
// max_pools is free again, the retirement's last diff, what is refused and why (nothing
// changes then), a later batch creating the pool afresh at seq 1, recovery after a restart
// replaying retirements from the journal alone and from snapshots on either side of them;
// and declared pools reserved against max_pools.
#include <gtest/gtest.h>

#include "daemon/pools/retry_ledger.h"
#include "daemon/service/query_handler.h"
#include "service_test_util.h"
#include "yoke/v1/query.pb.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::in_pool;
using testing::PoolView;
using testing::retire_message;
using testing::ServiceHarness;
using testing::view_of;
using testing::wire_add;
using testing::wire_remove;
using testing::wire_set;

v1::Error::Code refusal_code(const std::optional<v1::Ack>& ack) {
  if (!ack || !ack->has_rejected() || ack->rejected().errors_size() == 0) {
    return v1::Error::CODE_UNSPECIFIED;
  }
  return ack->rejected().errors(0).code();
}

class PoolRetireTest : public ::testing::Test {
 protected:
  explicit PoolRetireTest(DaemonConfig config = testing::test_config({})) : harness_(config) {}

  PoolService& service() { return harness_.service(); }
  std::optional<v1::Ack> retire(const std::string& pool, std::uint64_t at_seq = 0) {
    return service().offer(next_ticket_++ + 1000000, retire_message(pool, at_seq, "desk", 1));
  }
  // A triangle with a pendant: {1,2} and {3,4} matched (weights 5 and 4), as common knowledge
  // of a path 4-3-1-2 weighted 4, 1, 5 says.
  void fill(const std::string& pool, const std::string& client = "van-7") {
    ASSERT_FALSE(
        harness_.offer({wire_set(1, 2, 5), wire_set(1, 3, 1)}, from_client(client, 1, pool)));
    ASSERT_FALSE(harness_.offer({wire_set(3, 4, 4)}, from_client(client, 2, pool)));
    harness_.close();
  }

  ServiceHarness harness_;
  Ticket next_ticket_ = 0;
};

TEST_F(PoolRetireTest, RetirementDropsThePoolWholeAndPublishesItsLastDiff) {
  fill("brissa");
  fill("quay");
  ASSERT_TRUE(testing::pool_certified(*service().registry().find("brissa")));
  EXPECT_FALSE(retire("brissa").has_value());  // answered with the window
  EXPECT_TRUE(service().retire_waiting());
  const testing::WindowResult result = harness_.close();
  ASSERT_EQ(result.acks.size(), 1u);
  const v1::Ack& ack = result.acks[0].second;
  ASSERT_TRUE(ack.has_accepted()) << ack.DebugString();
  EXPECT_EQ(ack.accepted().seq(), 3u);  // the pool's last seq + 1
  EXPECT_EQ(ack.pool(), "brissa");
  EXPECT_EQ(ack.client_id(), "desk");
  ASSERT_EQ(result.diffs.size(), 1u);
  const v1::Diff& diff = result.diffs[0];
  EXPECT_TRUE(diff.retired());
  EXPECT_EQ(diff.seq(), 3u);
  EXPECT_EQ(diff.prev_seq(), 2u);
  ASSERT_EQ(diff.removed_size(), 2);
  EXPECT_EQ(diff.removed(0).a(), 1u);
  EXPECT_EQ(diff.removed(0).b(), 2u);
  EXPECT_EQ(diff.removed(0).weight(), 5);
  EXPECT_EQ(diff.removed(1).a(), 3u);
  EXPECT_EQ(diff.removed(1).weight(), 4);
  EXPECT_EQ(diff.added_size(), 0);
  EXPECT_EQ(diff.weight(), 0);
  EXPECT_EQ(diff.pairs(), 0u);

  // Gone: no pool, no progress, no retry marks; the other pool untouched.
  EXPECT_EQ(service().registry().find("brissa"), nullptr);
  EXPECT_EQ(service().progress("brissa"), nullptr);
  EXPECT_TRUE(service().ledger().clients_of("brissa").empty());
  EXPECT_FALSE(service().retire_waiting());
  EXPECT_EQ(service().registry().names(), std::vector<std::string>{"quay"});
  EXPECT_EQ(view_of(service(), "quay").seq, 2u);

  // Queries answer as for a pool that never existed.
  QueryHandler queries(service(), 1 << 20, nullptr, nullptr);
  v1::QueryRequest request;
  request.set_version(1);
  request.set_pool("brissa");
  request.mutable_matching();
  v1::QueryReply reply;
  ASSERT_TRUE(reply.ParseFromString(queries.handle(request.SerializeAsString())));
  EXPECT_EQ(reply.error().code(), v1::Error::UNKNOWN_POOL);

  // A later batch creates it afresh: seq 1, and the old client's batch numbers start over
  // (its marks went with the old pool).
  EXPECT_FALSE(harness_.offer({wire_add(9)}, from_client("van-7", 1, "brissa")));
  const testing::WindowResult again = harness_.close();
  ASSERT_EQ(again.acks.size(), 1u);
  EXPECT_EQ(again.acks[0].second.accepted().seq(), 1u);
  EXPECT_FALSE(again.acks[0].second.accepted().duplicate());
  ASSERT_EQ(again.diffs.size(), 1u);
  EXPECT_EQ(again.diffs[0].prev_seq(), 0u);
  EXPECT_FALSE(again.diffs[0].retired());
  EXPECT_EQ(view_of(service(), "brissa").vertices, 1u);
}

TEST_F(PoolRetireTest, RefusalsChangeNothing) {
  fill("brissa");
  const PoolView before = view_of(service(), "brissa");
  const std::uint64_t position = service().next_journal_position();
  EXPECT_EQ(refusal_code(retire("nowhere")), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(refusal_code(retire("bad name with spaces")), v1::Error::UNKNOWN_POOL);
  // A client id longer than a batch may carry (ingest.proto: "As in EventBatch") is refused
  // before anything is journalled, the id echoed for matching.
  const std::string long_id(kMaxClientIdBytes + 1, 'r');
  const auto long_id_refusal = service().offer(77, retire_message("brissa", 0, long_id, 5));
  EXPECT_EQ(refusal_code(long_id_refusal), v1::Error::MALFORMED_MESSAGE);
  EXPECT_EQ(long_id_refusal->rejected().errors(0).message(),
            "a client id has at most 128 bytes, not 129");
  EXPECT_EQ(long_id_refusal->client_id(), long_id);
  EXPECT_EQ(long_id_refusal->pool(), "brissa");
  const auto mismatch = retire("brissa", 1);
  EXPECT_EQ(refusal_code(mismatch), v1::Error::SEQ_MISMATCH);
  EXPECT_EQ(mismatch->rejected().errors(0).message(),
            "pool brissa is at seq 2, not at seq 1: not retired");
  EXPECT_TRUE(service().window_empty());
  EXPECT_FALSE(service().retire_waiting());
  harness_.close();
  EXPECT_EQ(service().next_journal_position(), position);
  EXPECT_EQ(view_of(service(), "brissa"), before);
  EXPECT_EQ(service().ledger().last("brissa", "van-7")->batch_number, 2u);
  // at_seq counts the batches of the open window.
  EXPECT_FALSE(harness_.offer({wire_add(7)}, from_client("van-7", 3, "brissa")));
  EXPECT_EQ(refusal_code(retire("brissa", 2)), v1::Error::SEQ_MISMATCH);
  EXPECT_FALSE(retire("brissa", 3).has_value());
  const auto acks = harness_.close().acks;
  ASSERT_EQ(acks.size(), 2u);
  EXPECT_EQ(acks[0].second.accepted().seq(), 3u);
  EXPECT_EQ(acks[1].second.accepted().seq(), 4u);
  EXPECT_EQ(service().registry().find("brissa"), nullptr);
}

// query.proto, SnapshotRequest: a snapshot of one pool lists that pool alone, or is
// UNKNOWN_POOL. A snapshot settles the open window first (YokedServer::take_snapshot), so a
// retirement in it takes the pool away before the capture: the answer is UNKNOWN_POOL then,
// not a snapshot listing no pool.
TEST_F(PoolRetireTest, ASnapshotOfAPoolRetiredInTheOpenWindowIsUnknownPool) {
  fill("brissa");
  fill("quay");
  QueryHandler queries(
      service(), 1 << 20,
      [this](bool all_pools, const std::string& pool) {
        harness_.close();  // as take_snapshot's settle_all()
        v1::SnapshotTaken taken;
        for (const std::string& name : service().registry().names()) {
          if (all_pools || name == pool) taken.add_pools()->set_pool(name);
        }
        return taken;
      },
      nullptr);
  const auto ask = [&queries](const std::string& pool) {
    v1::QueryRequest request;
    request.set_version(1);
    request.set_pool(pool);
    request.mutable_snapshot()->set_all_pools(false);
    v1::QueryReply reply;
    EXPECT_TRUE(reply.ParseFromString(queries.handle(request.SerializeAsString())));
    return reply;
  };
  ASSERT_FALSE(retire("brissa").has_value());
  const v1::QueryReply gone = ask("brissa");
  ASSERT_TRUE(gone.has_error()) << gone.ShortDebugString();
  EXPECT_EQ(gone.error().code(), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(gone.pool(), "brissa");
  EXPECT_EQ(service().registry().find("brissa"), nullptr);
  const v1::QueryReply kept = ask("quay");
  ASSERT_EQ(kept.snapshot().pools_size(), 1) << kept.ShortDebugString();
  EXPECT_EQ(kept.snapshot().pools(0).pool(), "quay");
}

// ingest.proto, RetirePool: "batches of the pool sent after it land in the next window, in the
// new pool". They wait for the retirement to be applied (not refused), then are checked, in the
// order they came, against the pool made afresh; a second retirement behind them retires that.
TEST_F(PoolRetireTest, BatchesSentAfterARetirementLandInTheNewPool) {
  fill("brissa");
  const std::uint64_t old_incarnation = view_of(service(), "brissa").incarnation;
  EXPECT_GT(old_incarnation, 0u);
  EXPECT_FALSE(harness_.offer({wire_add(7)}, from_client("van-7", 3, "brissa")));
  EXPECT_FALSE(retire("brissa").has_value());
  // Behind it: a batch, a retry of a batch of the old pool, one refused by the new pool's
  // state, and another retirement.
  EXPECT_FALSE(harness_.offer({wire_add(2)}, from_client("van-8", 1, "brissa")));
  EXPECT_FALSE(harness_.offer({wire_add(7)}, from_client("van-7", 3, "brissa")));
  EXPECT_FALSE(harness_.offer({wire_remove(4)}, from_client("van-8", 2, "brissa")));
  EXPECT_FALSE(service().offer(90, retire_message("brissa", 0, "desk", 2)));
  EXPECT_FALSE(harness_.offer({wire_add(3)}, from_client("van-8", 3, "brissa")));
  EXPECT_EQ(service().held_batches(), 5u);
  EXPECT_TRUE(service().retire_waiting());

  const auto first = service().seal();
  ASSERT_EQ(first.size(), 2u);
  EXPECT_EQ(first[1].second.accepted().seq(), 4u);  // the retirement
  service().start_apply();
  const PoolService::RepairsDone done = service().finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_TRUE(done.diffs[0].retired());
  EXPECT_EQ(done.diffs[0].incarnation(), old_incarnation);
  ASSERT_EQ(done.replies.size(), 1u);  // the old pool's vertex, which the new one does not hold
  EXPECT_EQ(done.replies[0].second.rejected().errors(0).code(), v1::Error::UNKNOWN_VERTEX);
  EXPECT_EQ(done.replies[0].second.client_batch(), 2u);
  EXPECT_EQ(service().held_batches(), 1u);  // the last batch, behind the second retirement
  EXPECT_TRUE(service().retire_waiting());

  // The new pool: its batch at seq 1, the old pool's batch again at seq 2 (its mark went with
  // the old pool), retired at seq 3; then the last batch creates it once more.
  const auto second = service().seal();
  ASSERT_EQ(second.size(), 3u);
  EXPECT_EQ(second[0].second.client_id(), "van-8");
  EXPECT_EQ(second[0].second.accepted().seq(), 1u);
  EXPECT_EQ(second[1].second.client_id(), "van-7");
  EXPECT_EQ(second[1].second.accepted().seq(), 2u);
  EXPECT_FALSE(second[1].second.accepted().duplicate());
  EXPECT_EQ(second[2].second.client_batch(), 2u);
  EXPECT_EQ(second[2].second.accepted().seq(), 3u);
  service().start_apply();
  const PoolService::RepairsDone retired_again = service().finish_repairs();
  ASSERT_EQ(retired_again.diffs.size(), 1u);
  EXPECT_EQ(retired_again.diffs[0].prev_seq(), 0u);
  EXPECT_TRUE(retired_again.diffs[0].retired());
  EXPECT_GT(retired_again.diffs[0].incarnation(), old_incarnation);
  EXPECT_TRUE(retired_again.replies.empty());
  EXPECT_EQ(service().held_batches(), 0u);

  const testing::WindowResult last = harness_.close();
  ASSERT_EQ(last.acks.size(), 1u);
  EXPECT_EQ(last.acks[0].second.accepted().seq(), 1u);
  EXPECT_EQ(view_of(service(), "brissa").vertices, 1u);
  ASSERT_EQ(last.diffs.size(), 1u);
  EXPECT_GT(last.diffs[0].incarnation(), retired_again.diffs[0].incarnation());
  EXPECT_EQ(last.diffs[0].incarnation(), view_of(service(), "brissa").incarnation);
}

TEST_F(PoolRetireTest, BatchesBeforeTheRetirementInItsWindowAreAcknowledgedThenDropped) {
  fill("brissa");
  EXPECT_FALSE(harness_.offer({wire_set(5, 6, 9)}, from_client("van-7", 3, "brissa")));
  EXPECT_FALSE(retire("brissa").has_value());
  const testing::WindowResult result = harness_.close();
  ASSERT_EQ(result.acks.size(), 2u);
  EXPECT_EQ(result.acks[0].second.accepted().seq(), 3u);
  EXPECT_EQ(result.acks[1].second.accepted().seq(), 4u);
  ASSERT_EQ(result.diffs.size(), 1u);
  // The diff goes from the subscribers' state (seq 2) to nothing.
  EXPECT_EQ(result.diffs[0].prev_seq(), 2u);
  EXPECT_EQ(result.diffs[0].removed_size(), 2);
  EXPECT_EQ(service().registry().find("brissa"), nullptr);
  // A pool made and retired in one window.
  EXPECT_FALSE(harness_.offer({wire_set(1, 2, 3)}, in_pool("flash")));
  EXPECT_FALSE(retire("flash").has_value());
  const testing::WindowResult flash = harness_.close();
  EXPECT_EQ(flash.acks[1].second.accepted().seq(), 2u);
  EXPECT_EQ(flash.diffs[0].prev_seq(), 0u);
  EXPECT_EQ(flash.diffs[0].removed_size(), 0);  // it never held a pair before the window
  EXPECT_TRUE(service().registry().names().empty());
}

// max_pools counts pools held now: retiring one lets another be made, any number of times.
class RetireCapTest : public PoolRetireTest {
 protected:
  static DaemonConfig capped() {
    DaemonConfig config = testing::test_config({});
    config.limits.max_pools = 2;
    return config;
  }
  RetireCapTest() : PoolRetireTest(capped()) {}

  // Both slots taken by `retired` and `kept` (committed), then `retired` retired in the open
  // window.
  void fill_the_cap_and_retire(const std::string& retired, const std::string& kept) {
    ASSERT_FALSE(harness_.offer({wire_add(1)}, in_pool(retired)));
    ASSERT_FALSE(harness_.offer({wire_add(1)}, in_pool(kept)));
    harness_.close();
    ASSERT_FALSE(retire(retired).has_value());
  }
};

TEST_F(RetireCapTest, RetiringFreesTheSlot) {
  for (int round = 0; round < 5; ++round) {
    const std::string name = "throwaway-" + std::to_string(round);
    ASSERT_FALSE(harness_.offer({wire_add(1)}, in_pool(name)));
    ASSERT_FALSE(harness_.offer({wire_add(1)}, in_pool("keep-" + std::to_string(round % 2))));
    harness_.close();
    EXPECT_EQ(refusal_code(harness_.offer({wire_add(1)}, in_pool("third"))),
              v1::Error::UNKNOWN_POOL);
    ASSERT_FALSE(retire(name).has_value());
    harness_.close();
    ASSERT_FALSE(retire("keep-" + std::to_string(round % 2)).has_value());
    harness_.close();
    EXPECT_EQ(service().registry().size(), 0u);
  }
}

// ingest.proto, RetirePool: the retired pool's slot is free again, and nothing is refused for
// coming early. A first batch of another pool sent behind the retirement while every slot is
// taken waits for it, as the retired pool's own batches do, and then takes the freed slot.
TEST_F(RetireCapTest, AFirstBatchBehindARetirementWaitsForItsSlot) {
  ASSERT_NO_FATAL_FAILURE(fill_the_cap_and_retire("ferrow", "gallant"));
  EXPECT_FALSE(harness_.offer({wire_add(5)}, from_client("van-9", 1, "tessock")).has_value());
  EXPECT_EQ(service().held_batches(), 1u);

  const auto first = service().seal();
  ASSERT_EQ(first.size(), 1u);  // the retirement alone
  EXPECT_EQ(first[0].second.pool(), "ferrow");
  EXPECT_TRUE(first[0].second.has_accepted());
  service().start_apply();
  const PoolService::RepairsDone done = service().finish_repairs();
  EXPECT_TRUE(done.replies.empty()) << done.replies[0].second.DebugString();
  EXPECT_EQ(service().held_batches(), 0u);

  const testing::WindowResult second = harness_.close();
  ASSERT_EQ(second.acks.size(), 1u);
  EXPECT_EQ(second.acks[0].second.pool(), "tessock");
  ASSERT_TRUE(second.acks[0].second.has_accepted()) << second.acks[0].second.DebugString();
  EXPECT_EQ(second.acks[0].second.accepted().seq(), 1u);
  EXPECT_EQ(service().registry().size(), 2u);

  // With no retirement on its way a full daemon refuses at once, as before.
  EXPECT_EQ(refusal_code(harness_.offer({wire_add(1)}, in_pool("ombrid"))),
            v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(service().held_batches(), 0u);
}

// The freed slot goes to the first batch that came for it, whichever pool's name sorts first:
// here a new pool's, then the retired pool's own batch, which finds no slot left.
TEST_F(RetireCapTest, TheFreedSlotGoesInArrivalOrder) {
  ASSERT_NO_FATAL_FAILURE(fill_the_cap_and_retire("quennow", "gallant"));
  EXPECT_FALSE(harness_.offer({wire_add(5)}, from_client("van-9", 1, "drastle")).has_value());
  EXPECT_FALSE(harness_.offer({wire_add(6)}, from_client("van-9", 2, "quennow")).has_value());
  EXPECT_EQ(service().held_batches(), 2u);
  ASSERT_EQ(service().seal().size(), 1u);  // the retirement
  service().start_apply();
  const PoolService::RepairsDone done = service().finish_repairs();
  ASSERT_EQ(done.replies.size(), 1u);
  EXPECT_EQ(done.replies[0].second.pool(), "quennow");
  EXPECT_EQ(refusal_code(done.replies[0].second), v1::Error::UNKNOWN_POOL);
  const testing::WindowResult next = harness_.close();
  ASSERT_EQ(next.acks.size(), 1u);
  EXPECT_EQ(next.acks[0].second.pool(), "drastle");
  EXPECT_EQ(next.acks[0].second.accepted().seq(), 1u);
}

// A retirement held behind a batch of its own pool that waits for a slot frees nothing (its
// pool does not exist): that batch is refused, not held for ever waiting for it.
TEST_F(RetireCapTest, ARetirementBehindABatchWaitingForASlotIsNoReasonToWait) {
  ASSERT_NO_FATAL_FAILURE(fill_the_cap_and_retire("quennow", "gallant"));
  EXPECT_FALSE(harness_.offer({wire_add(5)}, from_client("van-9", 1, "drastle")).has_value());
  EXPECT_FALSE(harness_.offer({wire_add(6)}, from_client("van-9", 2, "quennow")).has_value());
  EXPECT_FALSE(retire("quennow").has_value());
  EXPECT_EQ(service().held_batches(), 3u);
  ASSERT_EQ(service().seal().size(), 1u);  // the first retirement
  service().start_apply();
  const PoolService::RepairsDone done = service().finish_repairs();
  // drastle took the slot; quennow's batch finds none, and the second retirement no pool quennow.
  ASSERT_EQ(done.replies.size(), 2u);
  EXPECT_EQ(done.replies[0].second.client_batch(), 2u);
  EXPECT_EQ(refusal_code(done.replies[0].second), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(refusal_code(done.replies[1].second), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(service().held_batches(), 0u);
  const testing::WindowResult next = harness_.close();
  ASSERT_EQ(next.acks.size(), 1u);
  EXPECT_EQ(next.acks[0].second.pool(), "drastle");
}

// Declared pools have their slots reserved: a flood of other names takes only what is left.
class DeclaredPoolsTest : public PoolRetireTest {
 protected:
  static DaemonConfig declared() {
    DaemonConfig config = testing::test_config({});
    config.limits.max_pools = 3;
    config.pools["vardolune"] = PoolSettings{};
    config.pools["quillory"] = PoolSettings{Mode::max_cardinality, {}, 0};
    return config;
  }
  DeclaredPoolsTest() : PoolRetireTest(declared()) {}
};

TEST_F(DeclaredPoolsTest, AFloodOfOtherNamesCannotTakeTheirSlots) {
  EXPECT_FALSE(harness_.offer({wire_add(1)}, in_pool("flood-0")));
  const auto second = harness_.offer({wire_add(1)}, in_pool("flood-1"));
  ASSERT_EQ(refusal_code(second), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(second->rejected().errors(0).message(),
            "pool flood-1 may not be created: the daemon holds 1 pools not declared in its "
            "config, all the slots of its limit of 3 pools that its 2 declared pools leave "
            "(retire one to free a slot)");
  EXPECT_FALSE(harness_.offer({wire_add(1)}, in_pool("vardolune")));
  EXPECT_FALSE(harness_.offer({wire_add(1)}, in_pool("quillory")));
  harness_.close();
  EXPECT_EQ(service().registry().size(), 3u);
  EXPECT_EQ(service().registry().undeclared_size(), 1u);
  // A retired declared pool comes back with its declared settings; its slot stayed reserved.
  ASSERT_FALSE(retire("quillory").has_value());
  harness_.close();
  EXPECT_EQ(refusal_code(harness_.offer({wire_add(1)}, in_pool("flood-1"))),
            v1::Error::UNKNOWN_POOL);
  EXPECT_FALSE(harness_.offer({wire_add(2)}, in_pool("quillory")));
  harness_.close();
  EXPECT_EQ(service().registry().find("quillory")->mode(), Mode::max_cardinality);
  // After a restart the count is the same.
  harness_.restart();
  EXPECT_EQ(service().registry().undeclared_size(), 1u);
  EXPECT_EQ(refusal_code(harness_.offer({wire_add(1)}, in_pool("flood-1"))),
            v1::Error::UNKNOWN_POOL);
}

TEST(DeclaredPoolsConfig, MoreDeclaredPoolsThanTheCapIsRefused) {
  PoolRegistry registry({}, {{"a", {}}, {"b", {}}});
  EXPECT_TRUE(registry.may_create("a", 2));
  EXPECT_FALSE(registry.may_create("c", 2));
  EXPECT_TRUE(registry.may_create("c", 3));
  EXPECT_TRUE(registry.may_create("b", 1));  // declared: its own slot, whatever the rest
  EXPECT_FALSE(registry.may_create("c", 1));
}

// Recovery replays retirements exactly: from the journal alone, from a snapshot taken before
// a retirement, and from one taken after it; the pool made again afresh comes back at its own
// seqs, the retired one not at all.
class RetireRecoveryTest : public PoolRetireTest {
 protected:
  void churn() {
    fill("brissa");
    fill("quay", "bike-2");
    ASSERT_FALSE(retire("brissa").has_value());
    harness_.close();
    ASSERT_FALSE(harness_.offer({wire_set(1, 9, 2)}, from_client("van-7", 1, "brissa")));
    ASSERT_FALSE(harness_.offer({wire_set(7, 8, 3)}, in_pool("flash")));
    harness_.close();
    ASSERT_FALSE(retire("flash").has_value());
    harness_.close();
  }
  void expect_same_after_restart() {
    const PoolView brissa = view_of(service(), "brissa");
    const PoolView quay = view_of(service(), "quay");
    EXPECT_EQ(brissa.seq, 1u);
    // Made again after quay was made: a later incarnation (Diff.incarnation), kept by recovery.
    EXPECT_GT(quay.incarnation, 0u);
    EXPECT_GT(brissa.incarnation, quay.incarnation);
    harness_.restart();
    EXPECT_EQ(view_of(service(), "brissa"), brissa);
    EXPECT_EQ(view_of(service(), "quay"), quay);
    EXPECT_EQ(service().registry().names(), (std::vector<std::string>{"brissa", "quay"}));
    EXPECT_EQ(service().ledger().last("brissa", "van-7")->batch_number, 1u);
    EXPECT_TRUE(testing::pool_certified(*service().registry().find("brissa")));
    // Retries are answered as before the restart; the next batch continues the new pool.
    const auto retry = harness_.offer({wire_set(1, 9, 2)}, from_client("van-7", 1, "brissa"));
    ASSERT_TRUE(retry.has_value());
    EXPECT_TRUE(retry->accepted().duplicate());
    EXPECT_FALSE(harness_.offer({wire_add(3)}, from_client("van-7", 2, "brissa")));
    EXPECT_EQ(harness_.close().acks.at(0).second.accepted().seq(), 2u);
  }
};

TEST_F(RetireRecoveryTest, FromTheJournalAlone) {
  churn();
  expect_same_after_restart();
}

TEST_F(RetireRecoveryTest, FromASnapshotBeforeTheRetirement) {
  fill("brissa");
  harness_.snapshot();
  fill("quay", "bike-2");
  ASSERT_FALSE(retire("brissa").has_value());
  harness_.close();
  ASSERT_FALSE(harness_.offer({wire_set(1, 9, 2)}, from_client("van-7", 1, "brissa")));
  harness_.close();
  expect_same_after_restart();
}

TEST_F(RetireRecoveryTest, FromASnapshotAfterTheRetirement) {
  churn();
  harness_.snapshot();
  expect_same_after_restart();
  // And a retirement after the snapshot, replayed on top of it.
  ASSERT_FALSE(retire("quay").has_value());
  harness_.close();
  harness_.restart();
  EXPECT_EQ(service().registry().names(), std::vector<std::string>{"brissa"});
  EXPECT_EQ(view_of(service(), "brissa").seq, 2u);
}

}  // namespace
}  // namespace yoke::daemon
