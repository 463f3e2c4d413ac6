// The PoolService with a real journal in a temporary directory: sequence numbers, refusals and
// their codes, the batching window, retries, after_batch, diffs and journal records.
//
// Sources of the expected values: the protocol's comments (codes, seq rules, retry rules);
// common knowledge for the hand-computable matchings (named at each); the certificate checker
// and the engine's static solve for every pool state (pool_certified).
#include <filesystem>
#include <limits>
#include <map>
#include <random>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/service/pool_service.h"
#include "daemon/service/wire_types.h"
#include "service_test_util.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {
namespace {

using testing::BatchHeader;
using testing::close_window;
using testing::from_client;
using testing::journal_records;
using testing::in_pool;
using testing::PoolView;
using testing::ServiceHarness;
using testing::view_of;
using testing::wire_add;
using testing::wire_remove;
using testing::wire_set;
using testing::wire_unset;
using testing::WindowResult;

// A config with two small declared pools, "tiny" and "small", for limits and weight bounds.
DaemonConfig tiny_config() {
  DaemonConfig config = testing::test_config({});
  config.pools["tiny"] = testing::tiny_pool_settings();
  PoolSettings small;
  small.limits.max_vertices = 12;
  // Edges within a window are limited conservatively (engine/pool/batch_checker.cpp: removals are
  // not credited until the commit), so the sequential comparison below keeps this one far.
  small.limits.max_edges = 1000;
  small.limits.max_abs_weight = 1000;
  config.pools["small"] = small;
  return config;
}

// The acks of a closed window by ticket.
std::map<Ticket, v1::Ack> by_ticket(const WindowResult& result) {
  std::map<Ticket, v1::Ack> acks;
  for (const auto& [ticket, ack] : result.acks) acks[ticket] = ack;
  return acks;
}

std::uint64_t accepted_seq(const v1::Ack& ack) {
  EXPECT_TRUE(ack.has_accepted()) << ack.ShortDebugString();
  EXPECT_FALSE(ack.accepted().duplicate()) << ack.ShortDebugString();
  return ack.accepted().seq();
}

class PoolServiceTest : public ::testing::Test {
 protected:
  PoolServiceTest() : harness_(tiny_config()) {}

  // Every pool a test leaves behind holds a certified optimum.
  void TearDown() override {
    for (const std::string& name : service().registry().names()) {
      EXPECT_TRUE(testing::pool_certified(*service().registry().find(name))) << name;
    }
  }

  PoolService& service() { return harness_.service(); }
  Ticket offer(const std::vector<v1::Event>& events, const BatchHeader& header = {}) {
    const Ticket ticket = next_ticket_++;
    const auto ack = service().offer(ticket, testing::ingest_message(events, header));
    EXPECT_FALSE(ack.has_value()) << ack->ShortDebugString();
    return ticket;
  }
  v1::Ack offer_now(const std::vector<v1::Event>& events, const BatchHeader& header = {}) {
    const auto ack = service().offer(next_ticket_++, testing::ingest_message(events, header));
    EXPECT_TRUE(ack.has_value());
    return ack.value_or(v1::Ack{});
  }

  // Offers a batch that must be refused with `code` at `index`, and checks that nothing moved:
  // the pool's state, the journal, the window.
  void expect_refused(const std::vector<v1::Event>& events, const BatchHeader& header,
                      v1::Error::Code code, std::optional<std::uint32_t> index) {
    const std::string pool = header.pool.empty() ? "default" : header.pool;
    const PoolView before = view_of(service(), pool);
    const std::uint64_t journal_before = service().next_journal_position();
    const std::size_t window_events = service().window_events();
    const v1::Ack ack = offer_now(events, header);
    ASSERT_TRUE(ack.has_rejected()) << ack.ShortDebugString();
    ASSERT_GE(ack.rejected().errors_size(), 1);
    const v1::Error& error = ack.rejected().errors(0);
    EXPECT_EQ(error.code(), code) << error.ShortDebugString();
    EXPECT_FALSE(error.message().empty());
    EXPECT_EQ(error.has_event_index(), index.has_value()) << error.ShortDebugString();
    if (index) {
      EXPECT_EQ(error.event_index(), *index);
    }
    EXPECT_EQ(ack.client_id(), header.client_id);
    EXPECT_EQ(ack.client_batch(), header.client_batch);
    EXPECT_EQ(ack.pool(), pool);
    EXPECT_EQ(view_of(service(), pool), before);
    EXPECT_EQ(service().next_journal_position(), journal_before);
    EXPECT_EQ(service().window_events(), window_events);
  }

  ServiceHarness harness_;
  Ticket next_ticket_ = 1;
};

TEST_F(PoolServiceTest, SequenceNumbersCountPerPool) {
  const Ticket a1 = offer({wire_set(1, 2, 4)});
  const Ticket b1 = offer({wire_set(1, 2, 9)}, in_pool("harbour"));
  const Ticket a2 = offer({wire_set(2, 3, 5)}, in_pool("default"));
  EXPECT_FALSE(service().window_empty());
  EXPECT_EQ(service().window_events(), 3u);
  auto acks = by_ticket(close_window(service()));
  EXPECT_TRUE(service().window_empty());
  EXPECT_EQ(accepted_seq(acks[a1]), 1u);
  EXPECT_EQ(accepted_seq(acks[a2]), 2u);
  EXPECT_EQ(accepted_seq(acks[b1]), 1u);
  EXPECT_EQ(acks[a1].pool(), "default");
  EXPECT_EQ(acks[b1].pool(), "harbour");

  const Ticket a3 = offer({wire_remove(3)});
  const Ticket b2 = offer({wire_add(40)}, in_pool("harbour"));
  acks = by_ticket(close_window(service()));
  EXPECT_EQ(accepted_seq(acks[a3]), 3u);
  EXPECT_EQ(accepted_seq(acks[b2]), 2u);
  EXPECT_EQ(service().progress("default")->seq, 3u);
  EXPECT_EQ(service().progress("harbour")->seq, 2u);
  EXPECT_TRUE(testing::pool_certified(*service().registry().find("default")));
  EXPECT_TRUE(testing::pool_certified(*service().registry().find("harbour")));
}

TEST_F(PoolServiceTest, PoolRefusalsCarryTheirCodeAndEventIndex) {
  offer({wire_set(1, 2, 10), wire_set(2, 3, 7)}, in_pool("tiny"));
  close_window(service());
  const BatchHeader header{"crane-3", 5, "tiny", 0};
  expect_refused({wire_add(9), wire_set(4, 4, 1)}, header, v1::Error::SELF_LOOP, 1);
  expect_refused({wire_set(1, 3, 1001)}, header, v1::Error::WEIGHT_OUT_OF_RANGE, 0);
  expect_refused({wire_set(1, 2, 5), wire_set(1, 3, -1001)}, header,
                 v1::Error::WEIGHT_OUT_OF_RANGE, 1);
  expect_refused({wire_add(7), wire_remove(7), wire_remove(7)}, header, v1::Error::UNKNOWN_VERTEX,
                 2);
  expect_refused({wire_unset(1, 3)}, header, v1::Error::UNKNOWN_EDGE, 0);
  expect_refused({wire_unset(1, 2), wire_unset(2, 1)}, header, v1::Error::UNKNOWN_EDGE, 1);
  expect_refused({wire_add(3)}, header, v1::Error::VERTEX_EXISTS, 0);
  // Three vertices alive; the limit is four.
  expect_refused({wire_add(4), wire_add(5)}, header, v1::Error::POOL_LIMIT_EXCEEDED, 1);
  // Two edges alive; the limit is three.
  expect_refused({wire_set(1, 3, 2), wire_set(3, 4, 2)}, header, v1::Error::POOL_LIMIT_EXCEEDED, 1);
  EXPECT_TRUE(service().window_empty());
  EXPECT_TRUE(close_window(service()).acks.empty());

  const PoolProgress& progress = *service().progress("tiny");
  EXPECT_EQ(progress.batches_rejected, 9u);
  EXPECT_EQ(progress.batches_accepted, 1u);
  EXPECT_EQ(progress.seq, 1u);
  EXPECT_EQ(service().refusals().at(v1::Error::UNKNOWN_EDGE), 2u);
  EXPECT_EQ(service().refusals().at(v1::Error::POOL_LIMIT_EXCEEDED), 2u);
  EXPECT_EQ(service().refusals().at(v1::Error::SELF_LOOP), 1u);
  // A refused batch is not remembered: the same number, fixed, is applied.
  const Ticket fixed = offer({wire_add(4)}, header);
  EXPECT_EQ(accepted_seq(by_ticket(close_window(service()))[fixed]), 2u);
  EXPECT_TRUE(testing::pool_certified(*service().registry().find("tiny")));
}

TEST_F(PoolServiceTest, DecoderRefusalsAreCountedAndChangeNothing) {
  offer({wire_set(1, 2, 10)});
  close_window(service());
  const PoolView before = view_of(service(), "default");
  const auto ack = service().offer(99, std::string("\x12\x05\x0a", 3));
  ASSERT_TRUE(ack.has_value());
  EXPECT_EQ(ack->rejected().errors(0).code(), v1::Error::MALFORMED_MESSAGE);
  v1::Event bad = wire_add(5);
  bad.set_v(6);
  expect_refused({wire_add(4), bad}, from_client("x", 3),
                 v1::Error::MALFORMED_MESSAGE, 1);
  EXPECT_EQ(view_of(service(), "default"), before);
  EXPECT_EQ(service().refusals().at(v1::Error::MALFORMED_MESSAGE), 2u);
}

// ingest.proto, Rejected: the order of the checks. The events' form comes before the retry
// rule and before any event is checked against the pool, so a malformed event is the refusal
// even behind an earlier event that would not apply; the limits come after every event.
TEST_F(PoolServiceTest, TheFormIsCheckedBeforeTheRetryRuleAndThePool) {
  offer({wire_set(1, 2, 10)}, from_client("crane-3", 5, "tiny"));
  close_window(service());
  v1::Event stray_v = wire_add(5);
  stray_v.set_v(6);
  const BatchHeader next{"crane-3", 6, "tiny", 0};
  expect_refused({wire_set(4, 4, 1), stray_v}, next, v1::Error::MALFORMED_MESSAGE, 1);
  expect_refused({wire_remove(77), stray_v}, next, v1::Error::MALFORMED_MESSAGE, 1);
  expect_refused({wire_set(1, 3, 1001), stray_v}, next, v1::Error::MALFORMED_MESSAGE, 1);
  // Then the pool's checks in batch order, the limits last (tiny: four vertices alive).
  expect_refused({wire_add(3), wire_add(4), wire_add(5), wire_remove(77)}, next,
                 v1::Error::UNKNOWN_VERTEX, 3);
  // A resend of an applied batch is a duplicate whatever its events say to the pool, but a
  // malformed one is refused before the retry rule.
  const v1::Ack duplicate = offer_now({wire_remove(77)}, from_client("crane-3", 5, "tiny"));
  ASSERT_TRUE(duplicate.has_accepted()) << duplicate.ShortDebugString();
  EXPECT_TRUE(duplicate.accepted().duplicate());
  EXPECT_EQ(duplicate.accepted().seq(), 1u);
  expect_refused({stray_v}, from_client("crane-3", 5, "tiny"), v1::Error::MALFORMED_MESSAGE, 0);
  // One error per refusal.
  const v1::Ack two_bad = offer_now({wire_set(4, 4, 1), wire_remove(77)}, next);
  EXPECT_EQ(two_bad.rejected().errors_size(), 1);
  EXPECT_EQ(two_bad.rejected().errors(0).code(), v1::Error::SELF_LOOP);
}

TEST_F(PoolServiceTest, BatchRelyingOnAnEarlierBatchOfTheWindowIsAccepted) {
  // Alone, these would be refused: the edge and the vertex do not exist yet.
  expect_refused({wire_unset(1, 2)}, {}, v1::Error::UNKNOWN_EDGE, 0);
  expect_refused({wire_remove(3)}, {}, v1::Error::UNKNOWN_VERTEX, 0);
  const Ticket first = offer({wire_set(1, 2, 6), wire_add(3)});
  const Ticket second = offer({wire_unset(1, 2), wire_set(2, 3, 8)});
  const Ticket third = offer({wire_remove(1)});
  // ... and a batch that contradicts the window's earlier batches is refused.
  expect_refused({wire_add(3)}, {}, v1::Error::VERTEX_EXISTS, 0);
  auto acks = by_ticket(close_window(service()));
  EXPECT_EQ(accepted_seq(acks[first]), 1u);
  EXPECT_EQ(accepted_seq(acks[second]), 2u);
  EXPECT_EQ(accepted_seq(acks[third]), 3u);
  // Common knowledge: one edge {2,3} of weight 8 left; it is the matching.
  const PoolView view = view_of(service(), "default");
  EXPECT_EQ(view.vertices, 2u);
  EXPECT_EQ(view.edges, 1u);
  EXPECT_EQ(view.matching, (std::vector<MatchedPair>{{2, 3, 8}}));
  EXPECT_TRUE(testing::pool_certified(*service().registry().find("default")));
}

TEST_F(PoolServiceTest, RefusedBatchInTheMiddleOfAWindowLeavesTheOthers) {
  const Ticket a = offer({wire_set(10, 11, 3)}, from_client("ferry-1", 1));
  // Its first event alone would be fine; its second is not, so vertex 20 never arrives.
  expect_refused({wire_add(20), wire_remove(99)}, from_client("ferry-1", 2),
                 v1::Error::UNKNOWN_VERTEX, 1);
  const Ticket c = offer({wire_add(20), wire_set(20, 11, 5)},
                         from_client("ferry-1", 2));
  const auto acks = by_ticket(close_window(service()));
  ASSERT_EQ(acks.size(), 2u);
  EXPECT_EQ(accepted_seq(acks.at(a)), 1u);
  EXPECT_EQ(accepted_seq(acks.at(c)), 2u);
  EXPECT_EQ(journal_records(harness_.journal_dir()).size(), 2u);
  // Common knowledge: path 10-11-20 with weights 3 and 5 takes {11,20}.
  EXPECT_EQ(view_of(service(), "default").matching, (std::vector<MatchedPair>{{11, 20, 5}}));
  EXPECT_EQ(service().progress("default")->batches_rejected, 1u);
  EXPECT_TRUE(testing::pool_certified(*service().registry().find("default")));
}

TEST_F(PoolServiceTest, DuplicateWithinTheWindowIsAnsweredBySeal) {
  const BatchHeader header{"dock-9", 4, "", 0};
  const Ticket original = offer({wire_set(1, 2, 5)}, header);
  const Ticket retry = offer({wire_set(1, 2, 5)}, header);  // waits for the window
  EXPECT_FALSE(service().window_empty());
  EXPECT_EQ(service().window_events(), 1u);
  const WindowResult result = close_window(service());
  ASSERT_EQ(result.acks.size(), 2u);
  const auto acks = by_ticket(result);
  EXPECT_EQ(accepted_seq(acks.at(original)), 1u);
  ASSERT_TRUE(acks.at(retry).has_accepted());
  EXPECT_TRUE(acks.at(retry).accepted().duplicate());
  EXPECT_EQ(acks.at(retry).accepted().seq(), 1u);
  EXPECT_EQ(acks.at(retry).client_id(), "dock-9");
  EXPECT_EQ(acks.at(retry).client_batch(), 4u);
  EXPECT_EQ(acks.at(retry).pool(), "default");
  EXPECT_EQ(journal_records(harness_.journal_dir()).size(), 1u);
  EXPECT_EQ(service().progress("default")->batches_duplicate, 1u);
  EXPECT_EQ(service().progress("default")->batches_accepted, 1u);
}

TEST_F(PoolServiceTest, RetriesGetTheirOwnSeqAndLowerNumbersAreRefusedTruly) {
  offer({wire_set(1, 2, 5)}, from_client("dock-9", 4));
  offer({wire_set(3, 4, 1)}, from_client("other", 1));
  offer({wire_set(2, 3, 7)}, from_client("dock-9", 6));
  close_window(service());
  const PoolView before = view_of(service(), "default");
  // Each applied batch again: its own seq (events.proto, EventBatch.client_batch).
  for (const auto& [number, seq] :
       std::vector<std::pair<std::uint64_t, std::uint64_t>>{{6, 3}, {4, 1}}) {
    const v1::Ack ack = offer_now({wire_remove(77)}, from_client("dock-9", number));
    ASSERT_TRUE(ack.has_accepted()) << number;
    EXPECT_TRUE(ack.accepted().duplicate());
    EXPECT_EQ(ack.accepted().seq(), seq) << number;
  }
  // 5 was never sent, so never applied: BATCH_SKIPPED naming the highest, 6.
  expect_refused({wire_add(9)}, from_client("dock-9", 5), v1::Error::BATCH_SKIPPED,
                 std::nullopt);
  // 1 is below the first batch the ledger holds of dock-9: not known, BATCH_FORGOTTEN.
  expect_refused({wire_add(9)}, from_client("dock-9", 1), v1::Error::BATCH_FORGOTTEN,
                 std::nullopt);
  const v1::Ack skipped = offer_now({wire_add(9)}, from_client("dock-9", 5));
  ASSERT_TRUE(skipped.rejected().errors(0).has_last_batch());
  EXPECT_EQ(skipped.rejected().errors(0).last_batch(), 6u);
  // The same number in another pool is another batch.
  const Ticket elsewhere = offer({wire_add(1)}, from_client("dock-9", 6, "harbour"));
  const auto acks = by_ticket(close_window(service()));
  EXPECT_EQ(accepted_seq(acks.at(elsewhere)), 1u);
  EXPECT_EQ(acks.size(), 1u);
  EXPECT_EQ(view_of(service(), "default"), before);
  EXPECT_EQ(service().progress("default")->batches_duplicate, 2u);
  EXPECT_EQ(service().refusals().at(v1::Error::BATCH_SKIPPED), 2u);
  EXPECT_EQ(service().refusals().at(v1::Error::BATCH_FORGOTTEN), 1u);
  EXPECT_EQ(journal_records(harness_.journal_dir()).size(), 4u);
}

TEST_F(PoolServiceTest, AClientCountingFromOneAgainIsToldItsHighestBatch) {
  for (std::uint64_t number = 1; number <= 70; ++number) {
    offer({wire_set(number, number + 100, 1)}, from_client("tram", number));
  }
  close_window(service());
  const PoolView before = view_of(service(), "default");
  // A restarted client that counts from 1 under the same id: never silently dropped.
  for (std::uint64_t number = 1; number <= 6; ++number) {
    const v1::Ack ack = offer_now({wire_add(500 + number)}, from_client("tram", number));
    ASSERT_TRUE(ack.has_rejected()) << number;
    EXPECT_EQ(ack.rejected().errors(0).code(), v1::Error::BATCH_FORGOTTEN) << number;
    EXPECT_EQ(ack.rejected().errors(0).last_batch(), 70u);
  }
  // The remembered 64 batches (7..70) are exact retries with their own seqs.
  const v1::Ack retry = offer_now({wire_add(600)}, from_client("tram", 7));
  EXPECT_TRUE(retry.accepted().duplicate());
  EXPECT_EQ(retry.accepted().seq(), 7u);
  EXPECT_EQ(view_of(service(), "default"), before);
  // Continuing above the highest applies.
  const Ticket next = offer({wire_add(700)}, from_client("tram", 71, "", 70));
  EXPECT_EQ(accepted_seq(by_ticket(close_window(service())).at(next)), 71u);
}

TEST_F(PoolServiceTest, TheTopBatchNumberIsAnsweredTruly) {
  const std::uint64_t top = std::numeric_limits<std::uint64_t>::max();
  const Ticket first = offer({wire_add(1)}, from_client("ferry", top));
  EXPECT_EQ(accepted_seq(by_ticket(close_window(service())).at(first)), 1u);
  EXPECT_EQ(offer_now({wire_add(1)}, from_client("ferry", top)).accepted().seq(), 1u);
  // No number is above it: every other is refused and names it; another id works.
  expect_refused({wire_add(2)}, from_client("ferry", 1), v1::Error::BATCH_FORGOTTEN,
                 std::nullopt);
  EXPECT_EQ(offer_now({wire_add(2)}, from_client("ferry", 1)).rejected().errors(0).last_batch(),
            top);
  const Ticket renamed = offer({wire_add(2)}, from_client("ferry-2", 1));
  EXPECT_EQ(accepted_seq(by_ticket(close_window(service())).at(renamed)), 2u);
}

TEST_F(PoolServiceTest, LowerNumbersWithinTheWindowAreAnsweredTruly) {
  offer({wire_set(1, 2, 5)}, from_client("dock-9", 8));
  offer({wire_set(3, 4, 5)}, from_client("dock-9", 9));
  const Ticket retry = offer({wire_set(1, 2, 5)}, from_client("dock-9", 8));  // waits for seal
  // 2 was never applied, and nothing below the mark's first batch (8) is known.
  expect_refused({wire_add(7)}, from_client("dock-9", 2), v1::Error::BATCH_FORGOTTEN,
                 std::nullopt);
  const auto acks = by_ticket(close_window(service()));
  ASSERT_TRUE(acks.at(retry).has_accepted());
  EXPECT_TRUE(acks.at(retry).accepted().duplicate());
  EXPECT_EQ(acks.at(retry).accepted().seq(), 1u);
}

TEST_F(PoolServiceTest, ClientIdsPastTheirLimitAreRefusedAndNotKept) {
  const std::string longest(kMaxClientIdBytes, 'q');
  const Ticket fits = offer({wire_add(1)}, from_client(longest, 1));
  EXPECT_EQ(accepted_seq(by_ticket(close_window(service())).at(fits)), 1u);
  const std::string too_long(std::size_t{1} << 20, 'q');
  const v1::Ack ack = offer_now({wire_add(2)}, from_client(too_long, 1));
  ASSERT_TRUE(ack.has_rejected());
  EXPECT_EQ(ack.rejected().errors(0).code(), v1::Error::MALFORMED_MESSAGE);
  EXPECT_EQ(ack.rejected().errors(0).message(),
            "a client id has at most 128 bytes, not 1048576");
  EXPECT_EQ(ack.client_id(), too_long);  // echoed: the client matches replies by id and batch
  EXPECT_EQ(ack.client_batch(), 1u);
  EXPECT_EQ(service().ledger().size(), 1u);
  EXPECT_TRUE(service().window_empty());
  EXPECT_EQ(view_of(service(), "default").vertices, 1u);
}

TEST_F(PoolServiceTest, EmptyClientIdIsNeverDeduplicated) {
  const Ticket first = offer({wire_set(1, 2, 5)}, from_client("", 1));
  const Ticket second = offer({wire_set(1, 2, 5)}, from_client("", 1));
  auto acks = by_ticket(close_window(service()));
  EXPECT_EQ(accepted_seq(acks.at(first)), 1u);
  EXPECT_EQ(accepted_seq(acks.at(second)), 2u);
  const Ticket third = offer({wire_set(1, 2, 6)}, from_client("", 1));
  acks = by_ticket(close_window(service()));
  EXPECT_EQ(accepted_seq(acks.at(third)), 3u);
  EXPECT_EQ(service().ledger().size(), 0u);
  EXPECT_EQ(journal_records(harness_.journal_dir()).size(), 3u);
}

TEST_F(PoolServiceTest, AfterBatchMustNameTheLastAppliedBatch) {
  const BatchHeader none_before{"bus-2", 3, "", 2};
  // Nothing applied yet for this client: any predecessor is wrong.
  expect_refused({wire_add(1)}, none_before, v1::Error::OUT_OF_ORDER, std::nullopt);
  const Ticket first = offer({wire_add(1)}, from_client("bus-2", 2));
  // In the same window: its predecessor is already in the ledger.
  const Ticket second = offer({wire_add(2)}, {"bus-2", 3, "", 2});
  auto acks = by_ticket(close_window(service()));
  EXPECT_EQ(accepted_seq(acks.at(first)), 1u);
  EXPECT_EQ(accepted_seq(acks.at(second)), 2u);
  // Batch 4 was lost: batch 5 naming it is refused, and nothing is applied.
  expect_refused({wire_add(5)}, {"bus-2", 5, "", 4}, v1::Error::OUT_OF_ORDER, std::nullopt);
  // The retry rule comes first: an old batch with a wrong predecessor is a duplicate.
  const v1::Ack retry = offer_now({wire_add(2)}, {"bus-2", 3, "", 1});
  EXPECT_TRUE(retry.accepted().duplicate());
  EXPECT_EQ(retry.accepted().seq(), 2u);
  // OUT_OF_ORDER names the client's last applied batch.
  const v1::Ack wrong = offer_now({wire_add(5)}, {"bus-2", 5, "", 4});
  EXPECT_EQ(wrong.rejected().errors(0).last_batch(), 3u);
  // A refused batch does not count as applied: its successor is out of order.
  expect_refused({wire_remove(99)}, {"bus-2", 4, "", 3}, v1::Error::UNKNOWN_VERTEX, 0);
  expect_refused({wire_add(5)}, {"bus-2", 5, "", 4}, v1::Error::OUT_OF_ORDER, std::nullopt);
  const Ticket right = offer({wire_add(5)}, {"bus-2", 5, "", 3});
  acks = by_ticket(close_window(service()));
  EXPECT_EQ(accepted_seq(acks.at(right)), 3u);
  EXPECT_EQ(service().refusals().at(v1::Error::OUT_OF_ORDER), 4u);
  EXPECT_EQ(view_of(service(), "default").vertices, 3u);
}

TEST_F(PoolServiceTest, DiffsCarryPrevSeqAndSortedPairsWithWeights) {
  // Window 1: two batches, one commit: the diff covers seq 1..2.
  offer({wire_set(3, 4, 5)});
  offer({wire_set(1, 2, 5), wire_set(2, 3, 1)});
  WindowResult result = close_window(service());
  ASSERT_EQ(result.diffs.size(), 1u);
  v1::Diff diff = result.diffs[0];
  EXPECT_EQ(diff.pool(), "default");
  EXPECT_EQ(diff.prev_seq(), 0u);
  EXPECT_EQ(diff.seq(), 2u);
  EXPECT_EQ(diff.removed_size(), 0);
  // Common knowledge: path 1-2-3-4 weighted 5, 1, 5 takes both end edges.
  ASSERT_EQ(diff.added_size(), 2);
  EXPECT_EQ(diff.added(0).ShortDebugString(), "a: 1 b: 2 weight: 5");
  EXPECT_EQ(diff.added(1).ShortDebugString(), "a: 3 b: 4 weight: 5");
  EXPECT_EQ(diff.weight(), 10);
  EXPECT_EQ(diff.pairs(), 2u);
  const Pool& pool = *service().registry().find("default");
  EXPECT_EQ(diff.weight(), pool.weight());
  EXPECT_EQ(diff.pairs(), pool.pairs());
  EXPECT_EQ(diff.stats().events(), 3u);
  EXPECT_TRUE(diff.stats().initial_solve());

  // Window 2: the middle edge rises to 20: 20 > 5 + 5, so it alone is matched.
  offer({wire_set(3, 2, 20)});
  offer({wire_add(50)}, in_pool("harbour"));
  result = close_window(service());
  ASSERT_EQ(result.diffs.size(), 2u);  // pools in name order
  EXPECT_EQ(result.diffs[0].pool(), "default");
  EXPECT_EQ(result.diffs[1].pool(), "harbour");
  EXPECT_EQ(result.diffs[1].prev_seq(), 0u);
  EXPECT_EQ(result.diffs[1].seq(), 1u);
  diff = result.diffs[0];
  EXPECT_EQ(diff.prev_seq(), 2u);
  EXPECT_EQ(diff.seq(), 3u);
  ASSERT_EQ(diff.removed_size(), 2);
  EXPECT_EQ(diff.removed(0).ShortDebugString(), "a: 1 b: 2 weight: 5");
  EXPECT_EQ(diff.removed(1).ShortDebugString(), "a: 3 b: 4 weight: 5");
  ASSERT_EQ(diff.added_size(), 1);
  EXPECT_EQ(diff.added(0).ShortDebugString(), "a: 2 b: 3 weight: 20");
  EXPECT_EQ(diff.weight(), 20);
  EXPECT_EQ(diff.pairs(), 1u);
  EXPECT_EQ(diff.weight(), pool.weight());
  EXPECT_EQ(diff.pairs(), pool.pairs());
  EXPECT_EQ(result.diffs[1].weight(), 0);  // common knowledge: a lone vertex has no pair

  // Window 3: it falls back to 1; removed carries the weight before the commit (20).
  offer({wire_set(2, 3, 1)});
  result = close_window(service());
  ASSERT_EQ(result.diffs.size(), 1u);  // harbour had no batch: no diff
  diff = result.diffs[0];
  EXPECT_EQ(diff.prev_seq(), 3u);
  EXPECT_EQ(diff.seq(), 4u);
  ASSERT_EQ(diff.removed_size(), 1);
  EXPECT_EQ(diff.removed(0).ShortDebugString(), "a: 2 b: 3 weight: 20");
  ASSERT_EQ(diff.added_size(), 2);
  EXPECT_EQ(diff.added(0).ShortDebugString(), "a: 1 b: 2 weight: 5");
  EXPECT_EQ(diff.added(1).ShortDebugString(), "a: 3 b: 4 weight: 5");

  // Window 4: a matched pair's weight changes and stays matched: in neither list.
  offer({wire_set(1, 2, 6)});
  result = close_window(service());
  ASSERT_EQ(result.diffs.size(), 1u);
  EXPECT_EQ(result.diffs[0].removed_size(), 0);
  EXPECT_EQ(result.diffs[0].added_size(), 0);
  EXPECT_EQ(result.diffs[0].weight(), 11);
  EXPECT_TRUE(testing::pool_certified(*service().registry().find("default")));

  const PoolProgress& progress = *service().progress("default");
  EXPECT_EQ(progress.commits, 4u);
  EXPECT_EQ(progress.batches_accepted, 5u);
  EXPECT_EQ(progress.events_applied, 6u);
}

// publish.proto, Diff.added: the lists compare the matching before and after the commit, so a
// pair matched on both sides is in neither, even when its edge or a vertex left and came back
// within the commit; the weights are read from the pool (common knowledge: {1,2} and {3,4}
// are the only edges, so both are matched whatever their positive weights).
TEST_F(PoolServiceTest, APairMatchedBeforeAndAfterIsInNeitherList) {
  offer({wire_set(1, 2, 5), wire_set(3, 4, 5)});
  close_window(service());
  offer({wire_remove(1), wire_set(1, 2, 7)});
  offer({wire_unset(3, 4), wire_set(3, 4, 8)});
  const WindowResult result = close_window(service());
  ASSERT_EQ(result.diffs.size(), 1u);
  EXPECT_EQ(result.diffs[0].removed_size(), 0);
  EXPECT_EQ(result.diffs[0].added_size(), 0);
  EXPECT_EQ(result.diffs[0].weight(), 15);
  EXPECT_EQ(result.diffs[0].pairs(), 2u);
  EXPECT_EQ(view_of(service(), "default").edges, 2u);
}

TEST_F(PoolServiceTest, EmptyWindowPublishesNothing) {
  const WindowResult result = close_window(service());
  EXPECT_TRUE(result.acks.empty());
  EXPECT_TRUE(result.diffs.empty());
  EXPECT_EQ(service().next_journal_position(), 1u);
}

TEST_F(PoolServiceTest, JournalHoldsOneRecordPerAcceptedBatch) {
  offer({wire_set(1, 2, 3)}, from_client("c", 1));
  offer({wire_add(9)}, in_pool("tiny"));
  offer({wire_set(2, 3, 4), wire_remove(1)}, from_client("c", 2));
  expect_refused({wire_remove(1000)}, {}, v1::Error::UNKNOWN_VERTEX, 0);
  close_window(service());
  offer({wire_unset(2, 3)}, from_client("d", 7));
  offer({wire_add(8)}, in_pool("tiny"));
  close_window(service());
  EXPECT_EQ(service().next_journal_position(), 6u);

  const std::vector<v1::JournalRecord> records = journal_records(harness_.journal_dir());
  ASSERT_EQ(records.size(), 5u);
  const struct {
    const char* pool;
    std::uint64_t seq;
    const char* client;
    std::uint64_t batch;
    int events;
    std::uint64_t window_start;
  } expected[] = {{"default", 1, "c", 1, 1, 1}, {"tiny", 1, "", 0, 1, 1},
                  {"default", 2, "c", 2, 2, 1}, {"default", 3, "d", 7, 1, 4},
                  {"tiny", 2, "", 0, 1, 4}};
  for (std::size_t i = 0; i < records.size(); ++i) {
    SCOPED_TRACE(i);
    const v1::JournalRecord& record = records[i];
    EXPECT_EQ(record.pool(), expected[i].pool);
    EXPECT_EQ(record.seq(), expected[i].seq);
    EXPECT_EQ(record.client_id(), expected[i].client);
    EXPECT_EQ(record.client_batch(), expected[i].batch);
    EXPECT_EQ(record.events_size(), expected[i].events);
    EXPECT_EQ(record.window_start(), expected[i].window_start);
    EXPECT_GT(record.wall_time_unix_us(), 0u);
    // The pool's first record says how it was created.
    EXPECT_EQ(record.has_created(), record.seq() == 1);
  }
  EXPECT_EQ(records[0].created().mode(), v1::MODE_MAX_WEIGHT);
  EXPECT_EQ(records[1].created().limits().max_vertices(), 4u);
  EXPECT_EQ(records[1].created().limits().max_edges(), 3u);
  EXPECT_EQ(records[1].created().limits().max_abs_weight(), 1000u);
  EXPECT_EQ(records[2].events(0).ShortDebugString(), wire_set(2, 3, 4).ShortDebugString());
  EXPECT_EQ(records[2].events(1).ShortDebugString(), wire_remove(1).ShortDebugString());
}

TEST_F(PoolServiceTest, LimitsCountTheWholeWindow) {
  // tiny holds at most 4 vertices and 3 edges.
  const Ticket a = offer({wire_set(1, 2, 5), wire_set(2, 3, 5)}, in_pool("tiny"));
  const Ticket b = offer({wire_add(4)}, in_pool("tiny"));
  expect_refused({wire_add(5)}, in_pool("tiny"), v1::Error::POOL_LIMIT_EXCEEDED, 0);
  expect_refused({wire_set(3, 4, 1), wire_set(4, 1, 1)}, in_pool("tiny"),
                 v1::Error::POOL_LIMIT_EXCEEDED, 1);
  // A departure earlier in the window makes room for an arrival, even under the same key.
  const Ticket c = offer({wire_remove(4)}, in_pool("tiny"));
  const Ticket d = offer({wire_add(4), wire_set(4, 1, 7)}, in_pool("tiny"));
  const auto acks = by_ticket(close_window(service()));
  EXPECT_EQ(accepted_seq(acks.at(a)), 1u);
  EXPECT_EQ(accepted_seq(acks.at(b)), 2u);
  EXPECT_EQ(accepted_seq(acks.at(c)), 3u);
  EXPECT_EQ(accepted_seq(acks.at(d)), 4u);
  const PoolView view = view_of(service(), "tiny");
  EXPECT_EQ(view.vertices, 4u);
  EXPECT_EQ(view.edges, 3u);
  // Common knowledge: path 4-1-2-3 weighted 7, 5, 5 takes {1,4} and {2,3}.
  EXPECT_EQ(view.matching, (std::vector<MatchedPair>{{1, 4, 7}, {2, 3, 5}}));
  EXPECT_TRUE(testing::pool_certified(*service().registry().find("tiny")));
}

// A refused batch changes nothing, so it creates no pool: no pool to query, none counted
// against limits.max_pools (a pool made by a refusal would also vanish at the next restart,
// since the journal never mentions it).
TEST(PoolServiceCap, RefusedBatchCreatesNoPool) {
  DaemonConfig config = testing::test_config({});
  config.limits.max_pools = 2;
  ServiceHarness harness(config);
  EXPECT_FALSE(harness.offer({wire_set(1, 2, 3)}, in_pool("quay")).has_value());
  const auto refused = harness.offer({wire_remove(99)}, in_pool("ghost"));
  ASSERT_TRUE(refused.has_value());
  EXPECT_EQ(refused->rejected().errors(0).code(), v1::Error::UNKNOWN_VERTEX);
  const auto out_of_order =
      harness.offer({wire_add(1)}, from_client("van", 2, "phantom", 1));
  ASSERT_TRUE(out_of_order.has_value());
  EXPECT_EQ(out_of_order->rejected().errors(0).code(), v1::Error::OUT_OF_ORDER);
  EXPECT_EQ(harness.service().registry().find("ghost"), nullptr);
  EXPECT_EQ(harness.service().progress("ghost"), nullptr);
  EXPECT_EQ(harness.service().registry().find("phantom"), nullptr);
  harness.close();
  // The cap counts real pools: a second one may still be created, a third may not.
  EXPECT_FALSE(harness.offer({wire_add(1)}, in_pool("dock")).has_value());
  const auto third = harness.offer({wire_add(1)}, in_pool("pier"));
  ASSERT_TRUE(third.has_value());
  EXPECT_EQ(third->rejected().errors(0).code(), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(third->pool(), "pier");
  const auto acks = harness.close().acks;
  ASSERT_EQ(acks.size(), 1u);
  EXPECT_EQ(acks[0].second.accepted().seq(), 1u);
  EXPECT_EQ(harness.service().registry().names(), (std::vector<std::string>{"dock", "quay"}));
  // A pool that exists takes batches whatever the cap.
  EXPECT_FALSE(harness.offer({wire_add(5)}, in_pool("quay")).has_value());
  EXPECT_EQ(harness.close().acks.at(0).second.accepted().seq(), 2u);
}

// Random batches, many of them bad, offered in windows of several: each verdict (accepted, or
// the code and index of the refusal) must be the one a plain pool gives when every accepted
// batch is committed on its own (Pool::check, the engine's sequential rule). The graphs agree
// after every window and both pools are certified; the weights agree (ties may pick different
// pairs).
TEST_F(PoolServiceTest, WindowVerdictsMatchASequentialPool) {
  Pool sequential(Mode::max_weight, harness_.config().pools.at("small").limits);
  std::mt19937_64 random(99);
  const auto below = [&random](std::uint64_t n) { return random() % n; };
  std::map<v1::Error::Code, int> seen;
  for (int window = 0; window < 400; ++window) {
    std::map<Ticket, std::optional<EventError>> expected;
    const int batches = 1 + static_cast<int>(below(5));
    for (int b = 0; b < batches; ++b) {
      std::vector<v1::Event> events;
      const int count = 1 + static_cast<int>(below(3));
      for (int e = 0; e < count; ++e) {
        const VertexKey u = 1 + below(16);
        const VertexKey v = 1 + below(16);
        switch (below(10)) {
          case 0: events.push_back(wire_add(u)); break;
          case 1: events.push_back(wire_remove(u)); break;
          case 2: events.push_back(wire_unset(u, v)); break;
          case 3:
            events.push_back(wire_set(u, v, static_cast<Weight>(below(2601)) - 1300));
            break;
          default: events.push_back(wire_set(u, v, static_cast<Weight>(below(9)))); break;
        }
      }
      const std::vector<Event> engine = testing::engine_events(events);
      std::optional<EventError> verdict = sequential.check(engine);
      if (!verdict) sequential.commit(engine);
      const Ticket ticket = next_ticket_++;
      const auto ack = service().offer(ticket, testing::ingest_message(events, in_pool("small")));
      if (verdict) {
        ASSERT_TRUE(ack.has_value()) << "window " << window << ": the daemon accepted a batch "
                                     << "the pool refuses: " << verdict->message;
        ASSERT_TRUE(ack->has_rejected());
        EXPECT_EQ(ack->rejected().errors(0).code(), to_wire(verdict->code)) << verdict->message;
        EXPECT_EQ(ack->rejected().errors(0).event_index(), verdict->index);
        ++seen[to_wire(verdict->code)];
      } else {
        ASSERT_FALSE(ack.has_value()) << "window " << window << ": " << ack->ShortDebugString();
        expected[ticket] = std::nullopt;
      }
    }
    const auto acks = by_ticket(close_window(service()));
    ASSERT_EQ(acks.size(), expected.size());
    const Pool* found = service().registry().find("small");
    if (found == nullptr) {  // nothing accepted yet: a refusal creates no pool
      ASSERT_EQ(sequential.vertex_count(), 0u) << "window " << window;
      continue;
    }
    const Pool& daemon_pool = *found;
    ASSERT_EQ(daemon_pool.vertex_count(), sequential.vertex_count()) << "window " << window;
    ASSERT_EQ(daemon_pool.edge_count(), sequential.edge_count()) << "window " << window;
    ASSERT_EQ(daemon_pool.weight(), sequential.weight()) << "window " << window;
    ASSERT_TRUE(testing::pool_certified(daemon_pool)) << "window " << window;
    ASSERT_TRUE(testing::pool_certified(sequential)) << "window " << window;
  }
  // The stream did exercise the refusals it is about.
  for (const auto code : {v1::Error::SELF_LOOP, v1::Error::WEIGHT_OUT_OF_RANGE,
                          v1::Error::UNKNOWN_VERTEX, v1::Error::UNKNOWN_EDGE,
                          v1::Error::VERTEX_EXISTS, v1::Error::POOL_LIMIT_EXCEEDED}) {
    EXPECT_GT(seen[code], 0) << error_code_name(code);
  }
}

// A long stream over two pools: applying each diff to the previous matching gives the pool's
// matching, weights and pairs agree, prev_seq chains, and every state is certified.
TEST_F(PoolServiceTest, DiffsReplayToTheMatchingOnARandomStream) {
  testing::ScriptSpec spec;
  spec.windows = 40;
  const auto script = testing::random_script(spec, 11);
  std::vector<WindowResult> results;
  ASSERT_TRUE(testing::run_script(harness_, script, &results));
  std::map<std::string, std::set<std::pair<VertexKey, VertexKey>>> held;
  std::map<std::string, std::uint64_t> last_seq;
  for (const WindowResult& result : results) {
    for (const v1::Diff& diff : result.diffs) {
      auto& pairs = held[diff.pool()];
      EXPECT_EQ(diff.prev_seq(), last_seq[diff.pool()]);
      EXPECT_GT(diff.seq(), diff.prev_seq());
      last_seq[diff.pool()] = diff.seq();
      for (int i = 0; i < diff.removed_size(); ++i) {
        EXPECT_LT(diff.removed(i).a(), diff.removed(i).b());
        if (i > 0) {
          EXPECT_LT(std::make_pair(diff.removed(i - 1).a(), diff.removed(i - 1).b()),
                    std::make_pair(diff.removed(i).a(), diff.removed(i).b()));
        }
        EXPECT_EQ(pairs.erase({diff.removed(i).a(), diff.removed(i).b()}), 1u);
      }
      for (int i = 0; i < diff.added_size(); ++i) {
        EXPECT_LT(diff.added(i).a(), diff.added(i).b());
        if (i > 0) {
          EXPECT_LT(std::make_pair(diff.added(i - 1).a(), diff.added(i - 1).b()),
                    std::make_pair(diff.added(i).a(), diff.added(i).b()));
        }
        EXPECT_TRUE(pairs.insert({diff.added(i).a(), diff.added(i).b()}).second);
      }
      EXPECT_EQ(diff.pairs(), pairs.size());
    }
  }
  for (const std::string& name : service().registry().names()) {
    SCOPED_TRACE(name);
    const Pool& pool = *service().registry().find(name);
    std::set<std::pair<VertexKey, VertexKey>> actual;
    for (const MatchedPair& pair : pool.matching()) actual.insert({pair.a, pair.b});
    EXPECT_EQ(held[name], actual);
    EXPECT_EQ(service().progress(name)->seq, last_seq[name]);
    EXPECT_TRUE(testing::pool_certified(pool));
  }
}

}  // namespace
}  // namespace yoke::daemon
