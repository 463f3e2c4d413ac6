// The PoolService with repairs handed to an executor: a pool whose repair is in flight holds
// neither another pool's acknowledgements nor its queries, its own batches wait in order, and
// each pool's windows apply in seq order with many pools in flight on worker threads.
//
// Sources of the expected values: the seq rules of the protocol (events.proto: per pool, from
// 1, in the order accepted); the certificate checker for every pool state (pool_certified);
// and the inline executor's run of the same batches for the weights (an optimum is unique in
// weight whatever order the windows were grouped in).
#include <deque>
#include <functional>
#include <map>
#include <optional>
#include <random>
#include <tuple>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/server/background_snapshot.h"
#include "daemon/server/repair_threads.h"
#include "daemon/service/pool_service.h"
#include "daemon/service/query_handler.h"
#include "daemon/service/wire_types.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "manual_repairs.h"
#include "service_test_util.h"
#include "yoke/v1/query.pb.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::in_pool;
using testing::ManualRepairs;
using testing::ServiceHarness;
using testing::wire_add;
using testing::wire_set;

// Runs `pool`'s tasks, and the tasks they lead to, until no repair is in flight; the replies
// finish_repairs() gave on the way.
std::vector<std::pair<Ticket, v1::Ack>> repair_to_the_end(ManualRepairs& repairs,
                                                           PoolService& service,
                                                           const std::string& pool) {
  std::vector<std::pair<Ticket, v1::Ack>> replies;
  while (service.repairs_in_flight()) {
    repairs.release(pool);
    for (auto& reply : service.finish_repairs().replies) replies.push_back(std::move(reply));
  }
  return replies;
}

std::string summary_request(const std::string& pool) {
  v1::QueryRequest request;
  request.set_version(1);
  request.set_pool(pool);
  request.mutable_summary();
  return request.SerializeAsString();
}

std::uint64_t accepted_seq(const std::pair<Ticket, v1::Ack>& reply) {
  return reply.second.has_accepted() ? reply.second.accepted().seq() : 0;
}

// Hands the sealed window over, runs every task of `pool` and collects them; the pool then
// is at `seq` with `weight`, certified.
void apply_and_expect(PoolService& service, ManualRepairs& repairs, const std::string& pool,
                      std::uint64_t seq, Weight weight) {
  service.start_apply();
  repairs.release(pool);
  service.finish_repairs();
  EXPECT_EQ(service.progress(pool)->seq, seq);
  EXPECT_EQ(service.registry().find(pool)->weight(), weight);
  EXPECT_TRUE(testing::pool_certified(*service.registry().find(pool)));
}

TEST(PoolRepairs, AHeldRepairHoldsNeitherAnotherPoolsAcksNorItsQueries) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  QueryHandler queries(service, 1 << 20, nullptr, nullptr);

  // Window 1: a pair in each pool; both acknowledged once durable, both repairs handed over.
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A")));
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 7)}, from_client("b", 1, "B")));
  const auto first_acks = service.seal();
  ASSERT_EQ(first_acks.size(), 2u);
  service.start_apply();
  EXPECT_TRUE(service.repairing("A"));
  EXPECT_TRUE(service.repairing("B"));

  // B's repair ends (its stage, then its repair); A's stays held.
  EXPECT_EQ(repairs.release("B"), 2u);
  PoolService::RepairsDone done = service.finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_EQ(done.diffs[0].pool(), "B");
  EXPECT_FALSE(service.repairing("B"));
  EXPECT_TRUE(service.repairing("A"));

  // A's next batch waits, unchecked; B's next batch is acknowledged by the next window.
  EXPECT_FALSE(harness.offer({wire_add(3), wire_add(4), wire_set(3, 4, 2)}, from_client("a", 2, "A")));
  EXPECT_EQ(service.held_batches(), 1u);
  EXPECT_FALSE(harness.offer({wire_add(3), wire_set(2, 3, 9)}, from_client("b", 2, "B")));
  const auto second_acks = service.seal();
  ASSERT_EQ(second_acks.size(), 1u);
  EXPECT_EQ(second_acks[0].second.pool(), "B");
  EXPECT_EQ(accepted_seq(second_acks[0]), 2u);
  service.start_apply();
  EXPECT_EQ(repairs.release("B"), 2u);
  done = service.finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_EQ(done.diffs[0].seq(), 2u);

  // A query on B reads B now; one on A is what a server holds (A's state is the worker's).
  const auto read = QueryHandler::pool_read_by(summary_request("A"));
  ASSERT_TRUE(read.has_value());
  EXPECT_EQ(read->pool, "A");
  EXPECT_FALSE(read->reads_prices);
  v1::QueryReply reply;
  ASSERT_TRUE(reply.ParseFromString(queries.handle(summary_request("B"))));
  ASSERT_TRUE(reply.has_summary()) << reply.DebugString();
  EXPECT_EQ(reply.summary().seq(), 2u);
  EXPECT_EQ(reply.summary().weight(), 9);

  // A's window is staged and repaired (two tasks), then its waiting batch is checked, joins
  // the window once collected, and gets seq 2.
  EXPECT_EQ(repairs.release("A"), 2u);
  done = service.finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_EQ(done.diffs[0].pool(), "A");
  EXPECT_EQ(done.diffs[0].seq(), 1u);
  EXPECT_TRUE(done.replies.empty());
  EXPECT_EQ(service.held_batches(), 0u);
  const auto third_acks = service.seal();
  ASSERT_EQ(third_acks.size(), 1u);
  EXPECT_EQ(third_acks[0].second.pool(), "A");
  EXPECT_EQ(accepted_seq(third_acks[0]), 2u);
  service.start_apply();
  repairs.release("A");
  done = service.finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_TRUE(testing::pool_certified(*service.registry().find("A")));
  EXPECT_TRUE(testing::pool_certified(*service.registry().find("B")));
  EXPECT_EQ(service.progress("A")->seq, 2u);
}

std::string explain_request(const std::string& pool, std::uint64_t vertex) {
  v1::QueryRequest request;
  request.set_version(1);
  request.set_pool(pool);
  request.mutable_explain()->set_vertex(vertex);
  return request.SerializeAsString();
}

// An odd max-cardinality pool holds the phantom vertex, and its first explanation after a
// commit searches for the certificate's prices (docs/mathematics.md §9): yoked has a worker
// make them, not its loop. Expected answers: the inline service's, which makes them on the
// caller's thread.
TEST(PoolRepairs, AnOddMaxCardinalityPoolsPricesAreMadeOnItsWorker) {
  DaemonConfig config = testing::test_config({});
  config.pools["odd"] = PoolSettings{Mode::max_cardinality, {}, 0};
  const std::vector<v1::Event> first = {wire_add(1), wire_add(2), wire_add(3), wire_set(1, 2, 5),
                                        wire_set(2, 3, 4)};
  ServiceHarness inline_harness(config);
  ASSERT_FALSE(inline_harness.offer(first, in_pool("odd")));
  inline_harness.close();
  QueryHandler inline_queries(inline_harness.service(), 1 << 20, nullptr, nullptr);

  ServiceHarness harness(config);
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  QueryHandler queries(service, 1 << 20, nullptr, nullptr);
  ASSERT_FALSE(harness.offer(first, in_pool("odd")));
  ASSERT_EQ(service.seal().size(), 1u);
  service.start_apply();
  EXPECT_FALSE(service.prices_on_worker("odd"));  // its repair is in flight: asked after it
  repairs.release("odd");
  service.finish_repairs();
  const Pool& pool = *service.registry().find("odd");
  // (The certificate is checked at the end: the check's export makes the prices too.)
  if (!pool.certificate_prices_due()) GTEST_SKIP() << "the phantom vertex is switched off";

  const auto read = QueryHandler::pool_read_by(explain_request("odd", 3));
  ASSERT_TRUE(read.has_value());
  EXPECT_EQ(read->pool, "odd");
  EXPECT_TRUE(read->reads_prices);
  ASSERT_TRUE(service.prices_on_worker("odd"));
  EXPECT_TRUE(service.repairing("odd"));  // a server holds the explanation meanwhile
  EXPECT_TRUE(pool.certificate_prices_due());  // not made on this thread
  EXPECT_EQ(repairs.queued("odd"), 1u);
  EXPECT_EQ(repairs.release("odd"), 1u);
  EXPECT_TRUE(service.finish_repairs().diffs.empty());  // no commit, no diff
  EXPECT_FALSE(service.repairing("odd"));
  EXPECT_FALSE(pool.certificate_prices_due());
  EXPECT_FALSE(service.prices_on_worker("odd"));  // made: nothing asked

  for (const std::uint64_t vertex : {1, 2, 3}) {
    v1::QueryReply worker_made, inline_made;
    ASSERT_TRUE(worker_made.ParseFromString(queries.handle(explain_request("odd", vertex))));
    ASSERT_TRUE(inline_made.ParseFromString(inline_queries.handle(explain_request("odd", vertex))));
    ASSERT_TRUE(worker_made.has_explain()) << worker_made.ShortDebugString();
    EXPECT_EQ(worker_made.explain().SerializeAsString(), inline_made.explain().SerializeAsString())
        << worker_made.ShortDebugString() << " vs " << inline_made.ShortDebugString();
  }

  // The next commit drops them: due again once it is staged.
  ASSERT_FALSE(harness.offer({wire_set(1, 3, 2)}, in_pool("odd")));
  ASSERT_EQ(service.seal().size(), 1u);
  service.start_apply();
  repairs.release("odd");
  service.finish_repairs();
  EXPECT_TRUE(pool.certificate_prices_due());
  EXPECT_TRUE(service.prices_on_worker("odd"));
  repairs.release("odd");
  service.finish_repairs();
  EXPECT_EQ(service.progress("odd")->seq, 2u);
  EXPECT_EQ(pool.weight(), 5);
  EXPECT_TRUE(testing::pool_certified(pool));

  // A max-weight pool's prices are its own: never a job.
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, in_pool("plain")));
  ASSERT_EQ(service.seal().size(), 1u);
  apply_and_expect(service, repairs, "plain", 1, 5);
  EXPECT_FALSE(service.prices_on_worker("plain"));
  EXPECT_FALSE(service.prices_on_worker("missing"));
}

TEST(PoolRepairs, HeldBatchesAreCheckedInArrivalOrderWithRetriesAndRefusals) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A")));
  service.seal();
  service.start_apply();
  // While A repairs: a retry of batch 1, a batch naming an unknown vertex, and batch 2.
  EXPECT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A")));
  EXPECT_FALSE(harness.offer({testing::wire_remove(99)}, from_client("a", 2, "A")));
  EXPECT_FALSE(harness.offer({wire_set(1, 2, 8)}, from_client("a", 3, "A", 1)));
  EXPECT_EQ(service.held_batches(), 3u);
  repairs.release("A");
  const PoolService::RepairsDone done = service.finish_repairs();
  ASSERT_EQ(done.replies.size(), 2u);
  EXPECT_TRUE(done.replies[0].second.accepted().duplicate());  // batch 1 is durable: seq 1
  EXPECT_EQ(done.replies[0].second.accepted().seq(), 1u);
  ASSERT_TRUE(done.replies[1].second.has_rejected());
  EXPECT_EQ(done.replies[1].second.rejected().errors(0).code(), v1::Error::UNKNOWN_VERTEX);
  const auto acks = service.seal();
  ASSERT_EQ(acks.size(), 1u);
  EXPECT_EQ(acks[0].second.client_batch(), 3u);
  EXPECT_EQ(accepted_seq(acks[0]), 2u);
  service.start_apply();
  repairs.release("A");
  service.finish_repairs();
  EXPECT_EQ(service.progress("A")->seq, 2u);
  EXPECT_EQ(service.registry().find("A")->weight(), 8);
}

// Once a pool's window is staged (Pool::stage), its next batches are checked on the loop
// against the staged pool plus the batches before them, and acknowledged by the next window,
// while the repair is still in flight; a refusal (one that exists only because of an earlier
// batch of the same window) is answered at once; a retry of a batch sealed but not yet repaired
// is a duplicate with that batch's seq. The windows then repair in seq order.
TEST(PoolRepairs, BatchesAreAcknowledgedWhileTheirPoolRepairs) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A")));
  service.seal();
  service.start_apply();
  // Window 1 not staged yet: A's batch waits.
  EXPECT_FALSE(harness.offer({wire_add(3), wire_set(2, 3, 6)}, from_client("a", 2, "A")));
  EXPECT_EQ(service.held_batches(), 1u);
  ASSERT_TRUE(repairs.release_one("A"));  // staged, not repaired
  PoolService::RepairsDone done = service.finish_repairs();
  EXPECT_TRUE(done.diffs.empty());
  EXPECT_TRUE(done.replies.empty());
  EXPECT_EQ(service.held_batches(), 0u);  // checked now: in the open window
  EXPECT_TRUE(service.repairing("A"));
  // Checked at once: refused only because of batch 2 (vertex 3), and a new batch after it.
  const std::optional<v1::Ack> refusal = harness.offer({wire_add(3)}, from_client("b", 1, "A"));
  ASSERT_TRUE(refusal && refusal->has_rejected());
  EXPECT_EQ(refusal->rejected().errors(0).code(), v1::Error::VERTEX_EXISTS);
  EXPECT_FALSE(harness.offer({testing::wire_remove(1)}, from_client("b", 2, "A")));
  const auto acks = service.seal();  // while window 1 repairs
  ASSERT_EQ(acks.size(), 2u);
  EXPECT_EQ(accepted_seq(acks[0]), 2u);
  EXPECT_EQ(accepted_seq(acks[1]), 3u);
  EXPECT_EQ(service.progress("A")->seq, 0u);  // nothing collected yet
  // A retry of batch 2, durable but not repaired: its duplicate at once.
  const std::optional<v1::Ack> retry =
      harness.offer({wire_add(3), wire_set(2, 3, 6)}, from_client("a", 2, "A"));
  ASSERT_TRUE(retry && retry->has_accepted());
  EXPECT_TRUE(retry->accepted().duplicate());
  EXPECT_EQ(retry->accepted().seq(), 2u);
  service.start_apply();  // window 2 behind window 1 on A's strand
  // Window 2 not staged, but its checker stayed here: A's next batch is checked on top of it.
  EXPECT_FALSE(harness.offer({wire_set(2, 3, 9)}, from_client("a", 3, "A", 2)));
  EXPECT_EQ(service.held_batches(), 0u);
  ASSERT_TRUE(repairs.release_one("A"));  // window 1's repair
  done = service.finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_EQ(done.diffs[0].seq(), 1u);
  EXPECT_EQ(repairs.release("A"), 2u);  // window 2 staged and repaired
  done = service.finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_EQ(done.diffs[0].prev_seq(), 1u);
  EXPECT_EQ(done.diffs[0].seq(), 3u);
  EXPECT_FALSE(service.repairing("A"));
  EXPECT_EQ(service.held_batches(), 0u);
  const auto last_acks = service.seal();
  ASSERT_EQ(last_acks.size(), 1u);
  EXPECT_EQ(accepted_seq(last_acks[0]), 4u);
  apply_and_expect(service, repairs, "A", 4, 9);
}

// A new pool's big first batch is checked on a worker (PoolService::FirstCheck): other pools'
// batches are acknowledged meanwhile, the pool's next batches wait behind it and get the
// following seqs; a refused first batch leaves no pool behind. Seqs: events.proto.
TEST(PoolRepairs, ANewPoolsBigFirstBatchIsCheckedOnAWorker) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  std::vector<v1::Event> big;
  for (VertexKey key = 1; key <= 5000; ++key) big.push_back(wire_add(key));
  for (VertexKey key = 1; key < 5000; key += 2) big.push_back(wire_set(key, key + 1, 3));
  std::vector<v1::Event> bad = big;
  bad.push_back(wire_set(7, 7, 1));  // a self loop, last
  EXPECT_FALSE(harness.offer(big, from_client("a", 1, "big")));
  EXPECT_FALSE(harness.offer(bad, from_client("a", 1, "bad")));
  EXPECT_EQ(service.held_batches(), 2u);
  EXPECT_TRUE(service.repairs_in_flight());
  EXPECT_FALSE(harness.offer({wire_add(1)}, from_client("b", 1, "B")));
  EXPECT_FALSE(harness.offer({wire_set(1, 5000, 9)}, from_client("a", 2, "big", 1)));
  EXPECT_EQ(service.held_batches(), 3u);
  const auto acks = service.seal();
  ASSERT_EQ(acks.size(), 1u);
  EXPECT_EQ(acks[0].second.pool(), "B");
  service.start_apply();
  repairs.release("B");
  EXPECT_EQ(repairs.release("big"), 1u);
  EXPECT_EQ(repairs.release("bad"), 1u);
  const PoolService::RepairsDone done = service.finish_repairs();
  ASSERT_EQ(done.replies.size(), 1u);
  EXPECT_EQ(done.replies[0].second.pool(), "bad");
  EXPECT_EQ(done.replies[0].second.rejected().errors(0).code(), v1::Error::SELF_LOOP);
  EXPECT_EQ(done.replies[0].second.rejected().errors(0).event_index(), bad.size() - 1);
  EXPECT_EQ(service.registry().find("bad"), nullptr);
  EXPECT_EQ(service.held_batches(), 0u);
  const auto big_acks = service.seal();
  ASSERT_EQ(big_acks.size(), 2u);
  EXPECT_EQ(accepted_seq(big_acks[0]), 1u);
  EXPECT_EQ(accepted_seq(big_acks[1]), 2u);
  apply_and_expect(service, repairs, "big", 2, 2498 * 3 + 9);  // 1-5000 for 1-2 and 4999-5000
}

// A later big batch of a pool (16384 events or more) is checked on a worker too, beside the
// pool's repair in flight (its own strand): another pool's batches are acknowledged meanwhile,
// the pool's next batch waits behind it, and a bad one is refused with its event's index, as
// the loop refuses it. Seqs: events.proto.
TEST(PoolRepairs, APoolsBigLaterBatchIsCheckedOnAWorkerBesideItsRepair) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(
      harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "big")));
  service.seal();
  service.start_apply();
  ASSERT_TRUE(repairs.release_one("big"));  // staged; its repair waits on the strand
  std::vector<v1::Event> big;
  for (VertexKey key = 3; key < 12003; ++key) big.push_back(wire_add(key));
  for (VertexKey key = 3; key < 12003; key += 2) big.push_back(wire_set(key, key + 1, 2));
  EXPECT_FALSE(harness.offer(big, from_client("a", 2, "big")));
  EXPECT_EQ(service.held_batches(), 1u);
  EXPECT_EQ(repairs.queued("big check"), 1u);
  EXPECT_FALSE(harness.offer({wire_add(1)}, from_client("b", 1, "B")));
  EXPECT_FALSE(harness.offer({wire_set(2, 3, 6)}, from_client("a", 3, "big", 2)));
  EXPECT_EQ(service.held_batches(), 2u);
  const auto acks = service.seal();
  ASSERT_EQ(acks.size(), 1u);
  EXPECT_EQ(acks[0].second.pool(), "B");
  service.start_apply();
  repairs.release("B");
  EXPECT_EQ(repairs.release("big check"), 1u);  // before the pool's repair
  EXPECT_TRUE(service.finish_repairs().replies.empty());
  EXPECT_EQ(service.held_batches(), 0u);
  const auto big_acks = service.seal();
  ASSERT_EQ(big_acks.size(), 2u);
  EXPECT_EQ(accepted_seq(big_acks[0]), 2u);
  EXPECT_EQ(accepted_seq(big_acks[1]), 3u);
  apply_and_expect(service, repairs, "big", 3, 5 + 6000 * 2);  // 2-3 for 6 does not pay
  EXPECT_FALSE(service.repairs_in_flight());

  std::vector<v1::Event> bad;
  for (VertexKey key = 12003; key < 52003; ++key) bad.push_back(wire_add(key));
  bad.push_back(wire_add(7));  // a vertex the pool has, last
  EXPECT_FALSE(harness.offer(bad, from_client("a", 4, "big")));
  EXPECT_EQ(repairs.queued("big check"), 1u);
  EXPECT_EQ(repairs.release("big check"), 1u);
  const PoolService::RepairsDone done = service.finish_repairs();
  ASSERT_EQ(done.replies.size(), 1u);
  ASSERT_EQ(done.replies[0].second.rejected().errors_size(), 1);
  EXPECT_EQ(done.replies[0].second.rejected().errors(0).code(), v1::Error::VERTEX_EXISTS);
  EXPECT_EQ(done.replies[0].second.rejected().errors(0).event_index(), bad.size() - 1);
  EXPECT_EQ(service.registry().find("big")->vertex_count(), 12002u);
  EXPECT_TRUE(service.window_empty());
}

// A query of the pool (drain()) that comes while a later big batch is checked on a worker
// makes the batch wait for the pool's repairs after all; offered from the hold then, it goes
// to a worker again, and joins the window with the seq it would have had.
TEST(PoolRepairs, ABigLaterBatchWaitsForADrainThatBeganDuringItsCheck) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2)}, from_client("a", 1, "big")));
  service.seal();
  service.start_apply();
  ASSERT_TRUE(repairs.release_one("big"));  // staged; its repair waits on the strand
  std::vector<v1::Event> big;
  for (VertexKey key = 3; key < 20003; ++key) big.push_back(wire_add(key));
  EXPECT_FALSE(harness.offer(big, from_client("a", 2, "big")));
  ASSERT_EQ(repairs.queued("big check"), 1u);
  service.drain("big");
  EXPECT_EQ(repairs.release("big check"), 1u);
  EXPECT_TRUE(service.finish_repairs().replies.empty());
  EXPECT_EQ(service.held_batches(), 1u);
  EXPECT_TRUE(service.window_empty());
  EXPECT_EQ(repairs.release("big"), 1u);  // the repair: the drain ends, the batch is offered
  EXPECT_TRUE(service.finish_repairs().replies.empty());
  EXPECT_EQ(repairs.queued("big check"), 1u);
  EXPECT_EQ(repairs.release("big check"), 1u);
  EXPECT_TRUE(service.finish_repairs().replies.empty());
  EXPECT_EQ(service.held_batches(), 0u);
  const auto acks = service.seal();
  ASSERT_EQ(acks.size(), 1u);
  EXPECT_EQ(accepted_seq(acks[0]), 2u);
  apply_and_expect(service, repairs, "big", 2, 0);
  EXPECT_EQ(service.registry().find("big")->vertex_count(), 20002u);
}

// A retirement waits until its pool's repairs are over (it drops the engine a worker holds),
// and the pool's batches after it wait behind it; drain() (a query held) makes the pool's
// batches wait too, so that its repairs end.
TEST(PoolRepairs, RetirementsAndDrainedPoolsWaitForTheRepairsInFlight) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(
      harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A")));
  ASSERT_FALSE(harness.offer({wire_add(1)}, from_client("b", 1, "B")));
  service.seal();
  service.start_apply();
  repairs.release_one("A");
  repairs.release_one("B");
  service.finish_repairs();
  service.drain("B");
  EXPECT_FALSE(harness.offer({wire_add(2)}, from_client("b", 2, "B")));
  EXPECT_FALSE(service.offer(90, testing::retire_message("A")));
  EXPECT_FALSE(harness.offer({wire_add(3)}, from_client("a", 2, "A")));
  EXPECT_EQ(service.held_batches(), 3u);
  EXPECT_TRUE(service.window_empty());
  repairs.release("A");
  repairs.release("B");
  const PoolService::RepairsDone done = service.finish_repairs();
  EXPECT_EQ(done.diffs.size(), 2u);
  EXPECT_TRUE(done.replies.empty());
  EXPECT_EQ(service.held_batches(), 1u);  // A's batch, behind its retirement
  const auto acks = service.seal();
  ASSERT_EQ(acks.size(), 2u);
  service.start_apply();
  repairs.release("B");
  const PoolService::RepairsDone last = service.finish_repairs();
  EXPECT_TRUE(last.replies.empty());
  EXPECT_EQ(service.held_batches(), 0u);  // in the open window, creating A afresh
  EXPECT_EQ(service.journalled_seq("A"), 0u);
  EXPECT_EQ(service.progress("B")->seq, 2u);
  EXPECT_EQ(last.diffs.size(), 2u);  // A's retirement and B's window
  // The executor forgets A once it is gone, with nothing of it queued; B it keeps.
  ASSERT_EQ(repairs.forgotten().size(), 1u);
  EXPECT_EQ(repairs.forgotten()[0], (std::pair<std::string, std::size_t>{"A", 0}));
}

// Worker threads keep a strand per pool given a task: pools retired leave none behind, so a
// daemon that sees many short-lived pools does not keep one for every name (bounded memory).
TEST(PoolRepairs, RetiredPoolsLeaveNoStrandBehind) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  RepairThreads threads(2);
  service.set_repair_executor(&threads);
  for (int round = 0; round < 3; ++round) {
    for (int i = 0; i < 10; ++i) {
      const std::string pool = "short-" + std::to_string(round) + "-" + std::to_string(i);
      ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 3)},
                                 from_client("c", 1, pool)));
    }
    service.seal();
    service.start_apply();
    service.wait_repairs();
    service.finish_repairs();
    EXPECT_EQ(threads.strands(), 10u);
    for (int i = 0; i < 10; ++i) {
      const std::string pool = "short-" + std::to_string(round) + "-" + std::to_string(i);
      EXPECT_FALSE(service.offer(100 + i, testing::retire_message(pool)));
    }
    service.seal();
    service.start_apply();
    service.wait_repairs();
    service.finish_repairs();
    EXPECT_EQ(service.registry().find("short-" + std::to_string(round) + "-0"), nullptr);
    EXPECT_EQ(threads.strands(), 0u) << "round " << round;
  }
}

// Random batches (many refused: vertex keys reused, edges unset twice, releases of pairs not
// held), retries of earlier batches and after_batch chains, offered while repairs are held and
// released at random: every answer is the one the inline service gives for the same offers in
// the same order, and the pools end equal and certified. The strand's check, its rebuild after
// a retry it had accepted as new, and the loop's own check all meet here, and so do checks on
// top of windows sealed behind a repair (chained) and not staged yet.
void expect_answers_of_the_inline_service(const DaemonConfig& config) {
  for (std::uint64_t seed = 1; seed <= 12; ++seed) {
    std::mt19937_64 random(seed);
    std::mt19937_64 capture_random(seed + 1000);
    const auto below = [&random](std::uint64_t n) { return random() % n; };
    ServiceHarness reference(config);
    ServiceHarness held(config);
    PoolService& service = held.service();
    ManualRepairs repairs;
    service.set_repair_executor(&repairs);
    const std::vector<std::string> pools = {"A", "B"};
    const std::vector<std::string> clients = {"c1", "c2", ""};
    std::map<std::pair<std::string, std::string>, std::uint64_t> last_batch;
    std::vector<std::pair<std::vector<v1::Event>, testing::BatchHeader>> sent;
    std::map<Ticket, v1::Ack> expected, answered;
    const auto take = [&answered](const std::vector<std::pair<Ticket, v1::Ack>>& replies) {
      for (const auto& [ticket, ack] : replies) {
        ASSERT_TRUE(answered.emplace(ticket, ack).second) << "answered twice: " << ticket;
      }
    };
    Ticket ticket = 0;
    for (int step = 0; step < 300; ++step) {
      std::vector<v1::Event> events;
      testing::BatchHeader header;
      if (!sent.empty() && below(6) == 0) {
        std::tie(events, header) = sent[below(sent.size())];  // a retry, as it was sent
      } else {
        header.pool = pools[below(pools.size())];
        header.client_id = clients[below(clients.size())];
        if (!header.client_id.empty()) {
          std::uint64_t& last = last_batch[{header.pool, header.client_id}];
          if (last != 0 && below(3) == 0) header.after_batch = last - below(2);
          last += 1 + below(2);
          header.client_batch = last;
        }
        for (std::uint64_t e = 0, n = 1 + below(4); e < n; ++e) {
          const VertexKey u = 1 + below(8);
          const VertexKey v = 1 + below(8);
          switch (below(6)) {
            case 0: events.push_back(wire_add(u)); break;
            case 1: events.push_back(testing::wire_remove(u)); break;
            case 2: events.push_back(testing::wire_unset(u, v)); break;
            // Releases of pairs never held (no holds: pool_certified reads unheld pools).
            case 3: events.push_back(testing::wire_release(u, v)); break;
            default: events.push_back(wire_set(u, v, static_cast<Weight>(below(9)) - 1)); break;
          }
        }
        sent.emplace_back(events, header);
      }
      ++ticket;
      const std::string message = testing::ingest_message(events, header);
      // The reference: every batch alone, in a window closed at once.
      if (auto now = reference.service().offer(ticket, message)) {
        expected.emplace(ticket, *now);
      } else {
        for (const auto& [t, ack] : testing::close_window(reference.service()).acks) {
          expected.emplace(t, ack);
        }
      }
      if (auto now = service.offer(ticket, message)) take({{ticket, *now}});
      // Held: windows closed and repairs released at random, so that batches wait.
      if (below(4) == 0) {
        take(service.seal());
        service.start_apply();
      }
      // A snapshot's capture of a pool, on its strand (a capture-only job when it is free),
      // from a generator of its own so that the batches are the same with or without it.
      if (capture_random() % 5 == 0) {
        service.capture_on_worker(pools[capture_random() % pools.size()]);
      }
      if (below(3) == 0) {
        // A pool's every task, or one (a stage alone: the pool's batches are then checked
        // against the staged pool while its repair waits).
        const std::string& pool = pools[below(pools.size())];
        if (below(2) == 0) {
          repairs.release(pool);
        } else {
          repairs.release_one(pool);
        }
        take(service.finish_repairs().replies);
      }
    }
    while (service.repairs_in_flight() || !service.window_empty()) {
      for (const std::string& pool : pools) repairs.release(pool);
      take(service.finish_repairs().replies);
      take(service.seal());
      service.start_apply();
    }
    ASSERT_EQ(answered.size(), expected.size()) << "seed " << seed;
    for (const auto& [t, ack] : expected) {
      ASSERT_TRUE(answered.contains(t)) << "seed " << seed << " ticket " << t;
      EXPECT_EQ(answered[t].DebugString(), ack.DebugString()) << "seed " << seed << " ticket " << t;
    }
    for (const std::string& pool : pools) {
      const Pool* ours = service.registry().find(pool);
      const Pool* theirs = reference.service().registry().find(pool);
      ASSERT_EQ(ours == nullptr, theirs == nullptr) << pool;
      if (ours == nullptr) continue;
      EXPECT_EQ(service.progress(pool)->seq, reference.service().progress(pool)->seq);
      EXPECT_EQ(ours->weight(), theirs->weight()) << pool;
      EXPECT_TRUE(testing::pool_certified(*ours)) << pool;
      EXPECT_TRUE(testing::pool_certified(*theirs)) << pool;
    }
  }
}

TEST(PoolRepairs, HeldRepairsAnswerEveryBatchAsTheInlineServiceDoes) {
  expect_answers_of_the_inline_service(testing::test_config({}));
}

// The same at a vertex limit the batches reach often: a window counted twice (in the pool once
// staged, and in the checker of the windows after it) or not at all would refuse, or accept,
// batches the inline service does not. (The edge limit is conservative within a window, so
// windows grouped otherwise than the reference's could differ there: see the next test.)
TEST(PoolRepairs, HeldRepairsAnswerAsTheInlineServiceAtAVertexLimit) {
  DaemonConfig config = testing::test_config({});
  for (const char* name : {"A", "B"}) {
    PoolSettings settings;
    settings.limits.max_vertices = 5;
    config.pools[name] = settings;
  }
  expect_answers_of_the_inline_service(config);
}

// A window sealed while its pool's previous window repairs waits on the strand to be staged;
// the pool's next batches are checked meanwhile on top of it (its checker stays on the loop)
// and acknowledged by the next window, before either repair ends, refusals answered at once.
// Seqs: events.proto; weights: the optimum of each graph, certified.
TEST(PoolRepairs, BatchesAreAcknowledgedWhileTheirPoolsPreviousWindowWaitsToBeStaged) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A")));
  service.seal();
  service.start_apply();
  ASSERT_TRUE(repairs.release_one("A"));  // window 1 staged; its repair held
  service.finish_repairs();
  ASSERT_FALSE(harness.offer({wire_add(3), wire_set(2, 3, 6)}, from_client("a", 2, "A")));
  ASSERT_EQ(service.seal().size(), 1u);
  service.start_apply();  // window 2 behind window 1's repair: not staged
  EXPECT_EQ(repairs.queued("A"), 3u);
  // Checked now, against the pool (window 1) plus window 2: vertex 3 exists, {2, 3} too.
  const std::optional<v1::Ack> exists = harness.offer({wire_add(3)}, from_client("b", 1, "A"));
  ASSERT_TRUE(exists && exists->has_rejected());
  EXPECT_EQ(exists->rejected().errors(0).code(), v1::Error::VERTEX_EXISTS);
  EXPECT_FALSE(harness.offer({wire_add(4), wire_set(3, 4, 8), testing::wire_unset(2, 3)},
                             from_client("a", 3, "A", 2)));
  EXPECT_EQ(service.held_batches(), 0u);
  auto acks = service.seal();
  ASSERT_EQ(acks.size(), 1u);
  EXPECT_EQ(accepted_seq(acks[0]), 3u);
  service.start_apply();  // window 3 behind window 2
  EXPECT_EQ(service.progress("A")->seq, 0u);  // no repair ended
  // Window 2 staged (window 1's repair, then its stage) while window 3 is not: the next batch
  // sees both.
  ASSERT_TRUE(repairs.release_one("A"));
  ASSERT_TRUE(repairs.release_one("A"));
  PoolService::RepairsDone done = service.finish_repairs();
  ASSERT_EQ(done.diffs.size(), 1u);
  EXPECT_EQ(done.diffs[0].seq(), 1u);
  const std::optional<v1::Ack> gone =
      harness.offer({testing::wire_unset(2, 3)}, from_client("b", 2, "A"));
  ASSERT_TRUE(gone && gone->has_rejected());
  EXPECT_EQ(gone->rejected().errors(0).code(), v1::Error::UNKNOWN_EDGE);
  EXPECT_FALSE(harness.offer({wire_set(1, 4, 20)}, from_client("a", 4, "A", 3)));
  acks = service.seal();
  ASSERT_EQ(acks.size(), 1u);
  EXPECT_EQ(accepted_seq(acks[0]), 4u);
  service.start_apply();
  repair_to_the_end(repairs, service, "A");
  EXPECT_EQ(service.progress("A")->seq, 4u);
  // Edges {1,2}=5, {3,4}=8, {1,4}=20: {1,4} alone outweighs {1,2} with {3,4} (13).
  EXPECT_EQ(service.registry().find("A")->weight(), 20);
  EXPECT_TRUE(testing::pool_certified(*service.registry().find("A")));
}

// A batch held while its pool's window stages joins a new window once that job is collected:
// the job's emptied checker (the pool's spare) is the new window's, and says nothing the pool
// does not; a retired pool's next incarnation starts with nothing of the old one.
TEST(PoolRepairs, AWindowAfterACollectedJobChecksOnItsSpareChecker) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A")));
  service.seal();
  service.start_apply();
  // Window 1 is not staged: the next batch waits for it, then joins a new window.
  ASSERT_FALSE(harness.offer({wire_add(3), wire_set(2, 3, 7)}, from_client("a", 2, "A")));
  EXPECT_EQ(service.held_batches(), 1u);
  repairs.release("A");
  EXPECT_TRUE(service.finish_repairs().replies.empty());  // joined the window, unanswered
  EXPECT_EQ(service.held_batches(), 0u);
  const auto refused_with = [&](const std::vector<v1::Event>& events, const char* client,
                                std::uint64_t batch) {
    const std::optional<v1::Ack> ack = harness.offer(events, from_client(client, batch, "A"));
    return ack && ack->has_rejected() ? ack->rejected().errors(0).code() : v1::Error::INTERNAL;
  };
  EXPECT_EQ(refused_with({wire_add(3)}, "b", 1), v1::Error::VERTEX_EXISTS);  // the window's
  EXPECT_EQ(refused_with({wire_add(1)}, "b", 2), v1::Error::VERTEX_EXISTS);  // the pool's
  EXPECT_FALSE(harness.offer({testing::wire_unset(1, 2)}, from_client("b", 3, "A")));
  EXPECT_EQ(refused_with({testing::wire_unset(1, 2)}, "b", 4), v1::Error::UNKNOWN_EDGE);
  EXPECT_EQ(service.seal().size(), 2u);
  service.start_apply();
  repair_to_the_end(repairs, service, "A");
  EXPECT_EQ(service.progress("A")->seq, 3u);
  EXPECT_EQ(service.registry().find("A")->weight(), 7);
  EXPECT_TRUE(testing::pool_certified(*service.registry().find("A")));

  EXPECT_FALSE(service.offer(50, testing::retire_message("A")));
  service.seal();
  service.start_apply();
  service.finish_repairs();
  ASSERT_EQ(service.registry().find("A"), nullptr);
  EXPECT_FALSE(harness.offer({wire_add(2)}, from_client("c", 1, "A")));  // a new pool A
  EXPECT_EQ(refused_with({testing::wire_unset(2, 3)}, "c", 2), v1::Error::UNKNOWN_EDGE);
  EXPECT_EQ(service.seal().size(), 1u);
  service.start_apply();
  repair_to_the_end(repairs, service, "A");
  EXPECT_EQ(service.registry().find("A")->vertex_count(), 1u);
  EXPECT_TRUE(testing::pool_certified(*service.registry().find("A")));
}

// Back-pressure: once a pool's windows in flight that are not yet staged hold a full window of
// events ([batching] max_events, 2 here), its next batch waits unacknowledged until they are
// staged, then joins a window as usual; nothing is lost or reordered. A window staged but not
// repaired does not count (its events are in the engine): the next window is sealed and synced
// while it repairs, so that the worker finds it queued.
TEST(PoolRepairs, APoolFarBehindItsAcknowledgementsHoldsItsNextBatches) {
  DaemonConfig config = testing::test_config({});
  config.batching.max_events = 2;
  ServiceHarness harness(config);
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(harness.offer({wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A")));
  ASSERT_EQ(service.seal().size(), 1u);
  service.start_apply();  // 3 events not staged
  ASSERT_TRUE(repairs.release_one("A"));  // window 1 staged; its repair held
  service.finish_repairs();
  // Window 1's events are staged: none is behind, though none is repaired.
  ASSERT_FALSE(harness.offer({wire_add(3), wire_add(4)}, from_client("a", 2, "A")));
  EXPECT_EQ(service.held_batches(), 0u);
  ASSERT_EQ(service.seal().size(), 1u);
  service.start_apply();  // window 2, behind window 1's repair: 2 events not staged
  ASSERT_FALSE(harness.offer({wire_set(3, 4, 7), wire_add(5)}, from_client("a", 3, "A")));
  EXPECT_EQ(service.held_batches(), 1u);
  EXPECT_TRUE(service.seal().empty());  // nothing of it in the window: no acknowledgement yet
  // Window 1's repair ends, but window 2 is not staged: the batch still waits.
  ASSERT_TRUE(repairs.release_one("A"));
  EXPECT_EQ(service.finish_repairs().diffs.size(), 1u);
  EXPECT_EQ(service.held_batches(), 1u);
  // Window 2 staged, its repair not run: its stage wakes the loop (the held batch asked it
  // to), nothing is behind, and the batch joins a window.
  int wakes = 0;
  service.set_repair_listener([&wakes] { ++wakes; });
  ASSERT_TRUE(repairs.release_one("A"));
  EXPECT_EQ(wakes, 1);
  EXPECT_TRUE(service.finish_repairs().diffs.empty());
  EXPECT_EQ(service.held_batches(), 0u);
  const auto acks = service.seal();
  ASSERT_EQ(acks.size(), 1u);
  EXPECT_EQ(accepted_seq(acks[0]), 3u);
  service.start_apply();
  repair_to_the_end(repairs, service, "A");
  EXPECT_EQ(service.progress("A")->seq, 3u);
  // Edges {1,2}=5, {3,4}=7: both matched (common knowledge: disjoint edges).
  EXPECT_EQ(service.registry().find("A")->weight(), 12);
  EXPECT_TRUE(testing::pool_certified(*service.registry().find("A")));
}

// A pool whose repairs always lag one window: each new window checks on top of the chained
// checker, which would keep every vertex key that ever arrived or left. It is emptied when a
// window opens with every earlier one staged, and past its bound (one entry per event that
// may be behind, plus 2^15) the pool's next batch waits for that; nothing is refused or lost.
TEST(PoolRepairs, AChainedCheckerStaysWithinItsBoundUnderEndlessLag) {
  DaemonConfig config = testing::test_config({});
  config.batching.max_events = 1000;  // back-pressure past 1000 events not staged: not reached
  const std::size_t bound = 1000 + (1u << 15);
  ServiceHarness harness(config);
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  constexpr VertexKey kPerBatch = 100;
  const auto batch_of = [](std::uint64_t i) {
    std::vector<v1::Event> events;
    for (VertexKey k = 0; k < kPerBatch; ++k) events.push_back(wire_add(i * kPerBatch + k));
    if (i > 0) {  // the last batch's vertices leave: the pool stays small, the keys do not
      for (VertexKey k = 0; k < kPerBatch; ++k) {
        events.push_back(testing::wire_remove((i - 1) * kPerBatch + k));
      }
    }
    return events;
  };
  std::size_t most_entries = 0;
  std::size_t held_at = 0;
  std::uint64_t seq = 0;
  constexpr std::uint64_t kBatches = 4000;  // 100 new keys each: the bound is passed
  for (std::uint64_t i = 0; i < kBatches; ++i) {
    const std::optional<v1::Ack> answer = harness.offer(batch_of(i), from_client("c", i + 1, "A"));
    ASSERT_FALSE(answer) << "batch " << i;  // in the window, or held
    if (service.held_batches() > 0) {
      if (held_at == 0) held_at = i;
      // The lagging window's stage lets the held batch in, on an emptied checker.
      ASSERT_TRUE(repairs.release_one("A"));
      service.finish_repairs();
      ASSERT_EQ(service.held_batches(), 0u) << "batch " << i;
      EXPECT_LE(service.checker_entries("A"), 2 * kPerBatch);
    }
    most_entries = std::max(most_entries, service.checker_entries("A"));
    const auto acks = service.seal();
    ASSERT_EQ(acks.size(), 1u);
    EXPECT_EQ(accepted_seq(acks[0]), ++seq);
    service.start_apply();
    // Every window but the newest staged and repaired: the newest lags.
    while (repairs.queued("A") > 2) ASSERT_TRUE(repairs.release_one("A"));
    service.finish_repairs();
  }
  EXPECT_GT(held_at, 0u);  // the bound was reached, and the chain restarted
  EXPECT_LE(most_entries, bound + 2 * kPerBatch);
  repair_to_the_end(repairs, service, "A");
  EXPECT_EQ(service.progress("A")->seq, kBatches);
  EXPECT_EQ(service.registry().find("A")->vertex_count(), kPerBatch);  // the last batch's
}

// The vertex and edge limits across windows in flight (max_edges 3, max_vertices 4): a
// window's counts leave the chained checker once it is staged, so a batch that ends at a
// limit is accepted, and one that ends above it refused with the message of the inline
// service; a limit refusal found before the windows in flight are staged waits for them (the
// edge count over a departure is exact only then; the vertex count waits alike). Reference: the
// same batches through the inline service.
TEST(PoolRepairs, LimitsAreCountedOnceAcrossAStagedWindow) {
  DaemonConfig config = testing::test_config({});
  PoolSettings tiny;
  tiny.limits.max_vertices = 4;
  tiny.limits.max_edges = 3;
  config.pools["A"] = tiny;
  const std::vector<std::vector<v1::Event>> batches = {
      {wire_set(1, 2, 5), wire_set(3, 4, 6)},               // window 1: 4 vertices, 2 edges
      {wire_set(1, 3, 7)},                                  // window 2: 3 edges
      {wire_set(2, 4, 9)},                                  // 4 edges: refused
      {testing::wire_unset(1, 2), wire_set(2, 4, 9)},       // 3 edges: accepted
      {testing::wire_remove(4), wire_add(5), wire_add(6)},  // 5 vertices: refused
      {testing::wire_remove(4), wire_add(5)},               // 4 vertices: accepted
  };
  // The reference: each batch alone in a window, closed at once.
  ServiceHarness reference(config);
  std::vector<v1::Ack> expected;
  for (std::size_t i = 0; i < batches.size(); ++i) {
    if (auto now = reference.offer(batches[i], from_client("a", i + 1, "A"))) {
      expected.push_back(*now);
    } else {
      const auto acks = testing::close_window(reference.service()).acks;
      ASSERT_EQ(acks.size(), 1u);
      expected.push_back(acks[0].second);
    }
  }
  ASSERT_TRUE(expected[2].has_rejected());
  ASSERT_TRUE(expected[4].has_rejected());

  ServiceHarness harness(config);
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  std::map<Ticket, v1::Ack> answered;
  const auto take = [&answered](const std::vector<std::pair<Ticket, v1::Ack>>& replies) {
    for (const auto& [ticket, ack] : replies) answered.emplace(ticket, ack);
  };
  const auto offer = [&](std::size_t i) {
    const Ticket ticket = i + 1;
    const std::string message = testing::ingest_message(batches[i], from_client("a", i + 1, "A"));
    if (auto now = service.offer(ticket, message)) answered.emplace(ticket, *now);
  };
  offer(0);
  take(service.seal());
  service.start_apply();
  ASSERT_TRUE(repairs.release_one("A"));  // window 1 staged, its repair held
  take(service.finish_repairs().replies);
  offer(1);
  take(service.seal());
  service.start_apply();  // window 2 behind window 1's repair
  offer(2);  // above the edge limit with window 2 not staged: waits for it
  EXPECT_EQ(service.held_batches(), 1u);
  offer(3);  // behind it
  EXPECT_EQ(service.held_batches(), 2u);
  ASSERT_TRUE(repairs.release_one("A"));  // window 1's repair
  take(service.finish_repairs().replies);
  EXPECT_EQ(service.held_batches(), 2u);
  ASSERT_TRUE(repairs.release_one("A"));  // window 2's stage: both checked now
  take(service.finish_repairs().replies);
  EXPECT_EQ(service.held_batches(), 0u);
  EXPECT_TRUE(answered.contains(3));  // the refusal, at once
  take(service.seal());               // batch 4 in window 3
  service.start_apply();              // behind window 2's repair
  offer(4);  // above the vertex limit, window 3 not staged: waits too
  offer(5);
  EXPECT_EQ(service.held_batches(), 2u);
  ASSERT_TRUE(repairs.release_one("A"));  // window 2's repair
  ASSERT_TRUE(repairs.release_one("A"));  // window 3's stage
  take(service.finish_repairs().replies);
  EXPECT_EQ(service.held_batches(), 0u);
  EXPECT_TRUE(answered.contains(5));
  take(service.seal());
  service.start_apply();
  take(repair_to_the_end(repairs, service, "A"));
  ASSERT_EQ(answered.size(), batches.size());
  for (std::size_t i = 0; i < batches.size(); ++i) {
    EXPECT_EQ(answered[i + 1].DebugString(), expected[i].DebugString()) << "batch " << i + 1;
  }
  const Pool& ours = *service.registry().find("A");
  const Pool& theirs = *reference.service().registry().find("A");
  EXPECT_EQ(ours.weight(), theirs.weight());
  EXPECT_EQ(ours.vertex_count(), 4u);  // 1, 2, 3, 5
  EXPECT_EQ(ours.edge_count(), 1u);    // {1, 3}
  EXPECT_EQ(ours.edge_count(), theirs.edge_count());
  EXPECT_TRUE(testing::pool_certified(ours));
}

TEST(PoolRepairs, RefusingTheWindowRefusesTheBatchesWaitingForARepair) {
  ServiceHarness harness;
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(harness.offer({wire_add(1)}, from_client("a", 1, "A")));
  service.seal();
  service.start_apply();
  EXPECT_FALSE(harness.offer({wire_add(2)}, from_client("a", 2, "A")));
  const auto refusals =
      service.refuse_window(make_error(v1::Error::UNAVAILABLE, "stopping"));
  ASSERT_EQ(refusals.size(), 1u);
  EXPECT_EQ(refusals[0].second.rejected().errors(0).code(), v1::Error::UNAVAILABLE);
  EXPECT_EQ(service.held_batches(), 0u);
  repairs.release("A");
  service.finish_repairs();
}

// Windows closed without waiting for the repairs on worker threads, so that batches are
// checked on this thread against pools whose repairs run meanwhile (or wait for a window to be
// staged) and pools repair at once. Every batch is acknowledged once with its pool's next seq,
// every pool's diffs come in seq order without a gap, and the pools end as the inline run of
// the same batches ends them (weight and seq), certified. A background snapshot starts every
// fifth window (free pools captured on their strands while batches are checked), and a
// restart from the newest one ends as the inline run too. Run under ThreadSanitizer too
// (DEVELOPERS.md, "Inside the daemon").
void expect_windows_in_order_with_repairs_in_flight(const testing::ScriptSpec& spec,
                                                    std::uint64_t seed, std::size_t threads_count) {
  const std::vector<testing::ScriptWindow> script = testing::random_script(spec, seed);
  ServiceHarness reference;
  ASSERT_TRUE(testing::run_script(reference, script));

  ServiceHarness harness;
  PoolService& service = harness.service();
  RepairThreads threads(threads_count);
  service.set_repair_executor(&threads);
  // Background snapshots every few windows: free pools captured on their strands meanwhile.
  SnapshotDirectory store(harness.snapshot_dir(), 3);
  BackgroundSnapshot snapshot(service, store, [] {});
  service.set_collect_listener([&snapshot](const std::string& pool,
                                           PoolService::EngineCapture* engine) {
    snapshot.pool_collected(pool, engine);
  });
  std::size_t snapshots_written = 0;
  std::size_t windows_closed = 0;
  const auto take_snapshot_result = [&] {
    if (std::optional<BackgroundSnapshot::Written> written = snapshot.take_result()) {
      if (written->failure) {
        try {
          std::rethrow_exception(written->failure);
        } catch (const std::exception& error) {
          ADD_FAILURE() << "snapshot at " << written->position << " failed: " << error.what();
        }
      }
      ++snapshots_written;
    }
  };

  std::map<std::string, std::uint64_t> next_seq;     // per pool, the seq the next ack must carry
  std::map<std::string, std::uint64_t> last_diff;   // per pool, the seq of its last diff
  std::size_t acknowledged = 0;
  std::size_t offered = 0;
  std::map<Ticket, std::string> pool_of_ticket;
  const auto take_acks = [&](const std::vector<std::pair<Ticket, v1::Ack>>& acks) {
    for (const auto& [ticket, ack] : acks) {
      ASSERT_TRUE(ack.has_accepted()) << ack.DebugString();
      ASSERT_FALSE(ack.accepted().duplicate());
      EXPECT_EQ(ack.accepted().seq(), ++next_seq[ack.pool()]) << ack.pool();
      ASSERT_EQ(pool_of_ticket.erase(ticket), 1u);
      ++acknowledged;
    }
  };
  const auto take_done = [&](PoolService::RepairsDone done) {
    ASSERT_TRUE(done.replies.empty());
    for (const v1::Diff& diff : done.diffs) {
      EXPECT_EQ(diff.prev_seq(), last_diff[diff.pool()]) << diff.pool();
      EXPECT_GT(diff.seq(), diff.prev_seq());
      last_diff[diff.pool()] = diff.seq();
    }
  };
  Ticket ticket = 1;
  for (const testing::ScriptWindow& window : script) {
    for (const testing::ScriptBatch& batch : window) {
      pool_of_ticket[ticket] = batch.header.pool;
      ASSERT_FALSE(service.offer(ticket++, testing::ingest_message(batch.events, batch.header)));
      ++offered;
    }
    take_acks(service.seal());
    service.start_apply();
    take_done(service.finish_repairs());
    take_snapshot_result();
    if (!snapshot.busy() && ++windows_closed % 5 == 0) snapshot.start();
  }
  while (service.repairs_in_flight() || !service.window_empty()) {
    service.wait_repairs();
    take_done(service.finish_repairs());
    take_acks(service.seal());
    service.start_apply();
  }
  snapshot.wait_written();
  take_snapshot_result();
  EXPECT_GT(snapshots_written, 0u);
  EXPECT_EQ(acknowledged, offered);
  EXPECT_TRUE(pool_of_ticket.empty());
  for (const std::string& pool : spec.pools) {
    const Pool* ours = service.registry().find(pool);
    const Pool* theirs = reference.service().registry().find(pool);
    if (theirs == nullptr) {
      EXPECT_EQ(ours, nullptr);
      continue;
    }
    ASSERT_NE(ours, nullptr) << pool;
    EXPECT_EQ(service.progress(pool)->seq, reference.service().progress(pool)->seq) << pool;
    EXPECT_EQ(last_diff[pool], service.progress(pool)->seq) << pool;
    EXPECT_EQ(ours->weight(), theirs->weight()) << pool;
    EXPECT_TRUE(testing::pool_certified(*ours)) << pool;
  }
  threads.join();
  service.set_collect_listener(nullptr);
  service.set_repair_executor(nullptr);

  // A restart from the newest of those snapshots and the log after it: the same pools.
  const RecoveryReport report = harness.restart(3);
  EXPECT_TRUE(report.snapshot_position.has_value());
  for (const std::string& pool : spec.pools) {
    const Pool* theirs = reference.service().registry().find(pool);
    const Pool* ours = harness.service().registry().find(pool);
    ASSERT_EQ(ours == nullptr, theirs == nullptr) << pool;
    if (ours == nullptr) continue;
    EXPECT_EQ(harness.service().progress(pool)->seq, reference.service().progress(pool)->seq);
    EXPECT_EQ(ours->weight(), theirs->weight()) << pool;
  }
}

TEST(PoolRepairs, WindowsOfOnePoolApplyInOrderWithManyPoolsInFlight) {
  testing::ScriptSpec spec;
  spec.pools = {"p0", "p1", "p2", "p3", "p4", "p5", "p6", "p7"};
  spec.windows = 150;
  spec.max_batches_per_window = 10;
  spec.max_events_per_batch = 8;
  spec.keys = 40;
  expect_windows_in_order_with_repairs_in_flight(spec, 14, 4);
}

// Larger pools, so that a repair lasts while the next windows' batches are checked.
TEST(PoolRepairs, BatchesAreCheckedWhileTheirPoolsRepairOnWorkers) {
  testing::ScriptSpec spec;
  spec.pools = {"p0", "p1"};
  spec.windows = 120;
  spec.max_batches_per_window = 12;
  spec.max_events_per_batch = 40;
  spec.keys = 3000;
  spec.max_w = 1000;
  expect_windows_in_order_with_repairs_in_flight(spec, 21, 2);
}

}  // namespace
}  // namespace yoke::daemon
