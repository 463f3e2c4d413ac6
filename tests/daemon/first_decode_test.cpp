// A new pool's big first message decoded on a worker (PoolService::FirstCheck with `decode`):
// every answer is the one the inline service gives for the same messages in the same order,
// whatever the message holds (malformed, too large, a bad event at index k, a bad pool name, a
// client id too long), and the pool's batches, retries and retirement that arrive while it is
// decoded wait behind it and are answered as if it had been decoded on arrival. The journal
// holds the same records (the worker encodes an accepted batch's events for it).
//
// Sources of the expected values: the inline service (decode and check on the caller's
// thread, every message in a window of its own), which the batch decoder's and the service's
// own tests pin to the protocol (events.proto, ingest.proto).
#include <filesystem>
#include <map>
#include <optional>
#include <utility>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/service/pool_service.h"
#include "daemon/service/wire_types.h"
#include "manual_repairs.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::ManualRepairs;
using testing::ServiceHarness;
using testing::wire_add;
using testing::wire_set;

constexpr std::uint64_t kMaxMessageBytes = 256 << 10;

DaemonConfig small_limits() {
  DaemonConfig config = testing::test_config({});
  config.limits.max_message_bytes = kMaxMessageBytes;
  return config;
}

// A base graph of `vertices` vertices and a perfect matching's edges: past 64 KiB from 6,000.
std::vector<v1::Event> base_graph(VertexKey vertices) {
  std::vector<v1::Event> events;
  for (VertexKey key = 1; key <= vertices; ++key) events.push_back(wire_add(key));
  for (VertexKey key = 1; key < vertices; key += 2) events.push_back(wire_set(key, key + 1, 3));
  return events;
}

std::string big_message(const testing::BatchHeader& header, VertexKey vertices = 8000) {
  return testing::ingest_message(base_graph(vertices), header);
}

// The big message with event `index`'s kind replaced by one no protocol version has.
std::string with_bad_kind_at(std::size_t index, const testing::BatchHeader& header,
                             VertexKey vertices = 8000) {
  v1::EventBatch batch = testing::make_batch(base_graph(vertices), header);
  batch.mutable_events(static_cast<int>(index))->set_kind(static_cast<v1::Event::Kind>(99));
  return testing::ingest_message(batch);
}

// The big message with one event's bytes not a yoke.v1.Event (a field numbered 0 in it):
// its envelope reads, the message does not parse.
std::string with_unparsable_event(const testing::BatchHeader& header, VertexKey vertices = 8000) {
  v1::EventBatch batch = testing::make_batch(base_graph(vertices), header);
  v1::IngestRequest request;
  request.set_version(1);
  *request.mutable_batch() = batch;
  std::string bytes = request.SerializeAsString();
  // Field 4 of the batch (events), 2 bytes long, holding tag 0 and a 0.
  bytes += std::string("\x12\x04\x22\x02\x00\x00", 6);  // IngestRequest.batch merged
  return bytes;
}

struct Offered {
  std::string message;
  bool off_loop = false;  // expected: decoded on a worker (no answer from offer())
  bool settle_first = false;  // every window closed and repaired before it is offered
};

// Offers the messages in order to the inline service (a window closed after each) and to one
// whose worker tasks are held (all offered first, then repairs run and windows closed until
// nothing waits): the same answer for every ticket.
void expect_answers_of_the_inline_service(const std::vector<Offered>& messages,
                                          const std::vector<std::string>& pools,
                                          const DaemonConfig& config = small_limits()) {
  ServiceHarness reference(config);
  ServiceHarness held(config);
  PoolService& service = held.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  std::map<Ticket, v1::Ack> expected;
  std::map<Ticket, v1::Ack> answered;
  const auto take = [&answered](const std::vector<std::pair<Ticket, v1::Ack>>& replies) {
    for (const auto& [ticket, ack] : replies) {
      ASSERT_TRUE(answered.emplace(ticket, ack).second) << "answered twice: " << ticket;
    }
  };
  const auto settle = [&] {
    for (int round = 0; round < 20 && (service.repairs_in_flight() || !service.window_empty() ||
                                        service.held_batches() > 0);
         ++round) {
      for (const std::string& pool : pools) repairs.release(pool);
      take(service.finish_repairs().replies);
      take(service.seal());
      service.start_apply();
    }
  };
  Ticket ticket = 0;
  for (const Offered& offered : messages) {
    ++ticket;
    if (offered.settle_first) settle();
    if (auto now = reference.service().offer(ticket, offered.message)) {
      expected.emplace(ticket, *now);
    } else {
      for (const auto& [t, ack] : testing::close_window(reference.service()).acks) {
        expected.emplace(t, ack);
      }
    }
    std::size_t queued = 0;
    for (const std::string& pool : pools) queued += repairs.queued(pool);
    const std::optional<v1::Ack> now = service.offer(ticket, offered.message);
    if (now) take({{ticket, *now}});
    if (offered.off_loop) {
      EXPECT_FALSE(now) << "message " << ticket << " answered on the loop";
      std::size_t queued_after = 0;
      for (const std::string& pool : pools) queued_after += repairs.queued(pool);
      EXPECT_EQ(queued_after, queued + 1) << "message " << ticket << " not handed to a worker";
    }
  }
  settle();
  EXPECT_FALSE(service.repairs_in_flight());
  EXPECT_EQ(service.held_batches(), 0u);
  ASSERT_EQ(answered.size(), expected.size());
  for (const auto& [t, ack] : expected) {
    ASSERT_TRUE(answered.contains(t)) << "ticket " << t << " unanswered";
    EXPECT_EQ(answered[t].DebugString(), ack.DebugString()) << "ticket " << t;
  }
  // Windows differ (the reference closes one per message): each record's own fields compared.
  const auto by_pool_seq = [](const std::filesystem::path& journal) {
    std::map<std::pair<std::string, std::uint64_t>, v1::JournalRecord> records;
    for (v1::JournalRecord& record : testing::journal_records(journal)) {
      record.clear_window_start();
      record.clear_wall_time_unix_us();
      records.emplace(std::pair(record.pool(), record.seq()), std::move(record));
    }
    return records;
  };
  const auto want_records = by_pool_seq(reference.journal_dir());
  const auto got_records = by_pool_seq(held.journal_dir());
  ASSERT_EQ(got_records.size(), want_records.size());
  for (const auto& [key, want] : want_records) {
    ASSERT_TRUE(got_records.contains(key)) << key.first << " " << key.second;
    EXPECT_EQ(got_records.at(key).SerializeAsString(), want.SerializeAsString())
        << key.first << " " << key.second;
  }
  for (const std::string& pool : pools) {
    const Pool* want = reference.service().registry().find(pool);
    const Pool* got = service.registry().find(pool);
    ASSERT_EQ(want == nullptr, got == nullptr) << pool;
    if (want != nullptr) {
      EXPECT_EQ(got->weight(), want->weight()) << pool;
      EXPECT_TRUE(testing::pool_certified(*got)) << pool;
    }
  }
}

TEST(FirstDecode, AnAcceptedBigFirstBatchAndWhatArrivesBehindIt) {
  const std::string first = big_message(from_client("a", 1, "big"));
  ASSERT_GT(first.size(), std::size_t{64} << 10);
  expect_answers_of_the_inline_service(
      {{first, true},
       {testing::ingest_message({wire_add(1)}, from_client("b", 1, "other")), false},
       {first, false},  // its retry: a duplicate of seq 1
       {testing::ingest_message({wire_set(1, 8000, 9)}, from_client("a", 2, "big", 1)), false},
       {testing::ingest_message({wire_add(1)}, from_client("a", 3, "big")), false},  // refused
       {big_message(from_client("c", 1, "big"), 9000), false},  // big, not first: on the loop
       {testing::retire_message("big", 0, "a", 4), false}},
      {"big", "other"});
}

TEST(FirstDecode, ARefusedBigFirstBatchAnsweredAsOnTheLoopAndTheNextCreatesThePool) {
  const std::string malformed = with_unparsable_event(from_client("a", 1, "big"));
  const std::string bad_event = with_bad_kind_at(4321, from_client("a", 1, "big"));
  const std::string next = testing::ingest_message({wire_add(5)}, from_client("a", 2, "big"));
  expect_answers_of_the_inline_service(
      {{malformed, true}, {malformed, false}, {next, false}}, {"big"});
  expect_answers_of_the_inline_service(
      {{bad_event, true}, {next, false}, {bad_event, false}}, {"big"});
}

TEST(FirstDecode, NamesAndSizesDecodeRefusesStayOnTheLoop) {
  const std::string oversized = big_message(from_client("a", 1, "big"), 30000);
  ASSERT_GT(oversized.size(), kMaxMessageBytes);
  const std::string bad_pool = big_message(from_client("a", 1, "no spaces allowed"));
  const std::string long_id = big_message(from_client(std::string(200, 'x'), 1, "big"));
  const std::string old_version =
      testing::ingest_message(testing::make_batch(base_graph(8000), from_client("a", 1, "big")), 2);
  expect_answers_of_the_inline_service(
      {{oversized, false}, {bad_pool, false}, {long_id, false}, {old_version, false},
       {big_message(from_client("a", 1, "big")), true}},
      {"big", "no spaces allowed"});
}

// Slots under max_pools go in arrival order (protocol.md, "Pool names and limits"): a new
// pool's big first batch, checked on a worker, holds its slot against the first batches of
// other new pools that arrive behind it; they wait for its check and get a slot only if it
// was refused, as the inline service answers them.
TEST(FirstDecode, ABigFirstBatchKeepsItsSlotAgainstLaterNewPools) {
  DaemonConfig config = small_limits();
  config.limits.max_pools = 2;
  const std::string other = testing::ingest_message({wire_add(1)}, from_client("b", 1, "other"));
  const std::string third = testing::ingest_message({wire_add(1)}, from_client("c", 1, "third"));
  expect_answers_of_the_inline_service(
      {{other, false},
       {big_message(from_client("a", 1, "big")), true},
       {third, false},  // refused: big came first
       {big_message(from_client("d", 1, "big2")), false}},  // refused too, after big
      {"big", "big2", "other", "third"}, config);
  expect_answers_of_the_inline_service(
      {{other, false},
       {with_bad_kind_at(4321, from_client("a", 1, "big")), true},
       {third, false}},  // big is refused: the slot is third's
      {"big", "other", "third"}, config);
}

// A later big message of a pool that exists (past 256 KiB, 16,384 events) is decoded and
// checked on a worker too (beside the pool's strand: "big check") when nothing of the pool is
// in a window; what arrives behind it waits, and refusals are those of the loop.
TEST(FirstDecode, ALaterBigBatchOfAPoolIsDecodedAndCheckedOnAWorker) {
  DaemonConfig config = testing::test_config({});
  config.limits.max_message_bytes = std::uint64_t{4} << 20;
  const VertexKey n = 60000;
  const std::string later = big_message(from_client("a", 2, "big"), n);
  ASSERT_GT(later.size(), std::size_t{256} << 10);
  const std::string more =
      testing::ingest_message({wire_add(n + 2), wire_add(n + 3)}, from_client("a", 5, "big"));
  expect_answers_of_the_inline_service(
      {{testing::ingest_message({wire_add(n + 1)}, from_client("a", 1, "big")), false},
       {later, true, true},
       {testing::ingest_message({wire_add(1)}, from_client("b", 1, "other")), false},
       {later, false},  // its retry: a duplicate of seq 2, behind it
       {testing::ingest_message({wire_set(1, n + 1, 9)}, from_client("a", 3, "big", 2)), false},
       {with_bad_kind_at(54321, from_client("a", 4, "big"), n), true, true},
       {with_unparsable_event(from_client("a", 4, "big"), n), true, true},
       {big_message(from_client("c", 1, "big"), n), true, true},  // refused: vertex 1 exists
       {more, false},
       {testing::retire_message("big", 0, "a", 6), false}},
      {"big", "big check", "other"}, config);
}

// The daemon stops with a decode in flight: the message is refused (UNAVAILABLE) under the
// names its envelope gave, and the worker's late end changes nothing.
TEST(FirstDecode, ARefusedWindowAnswersADecodeInFlight) {
  ServiceHarness harness(small_limits());
  PoolService& service = harness.service();
  ManualRepairs repairs;
  service.set_repair_executor(&repairs);
  ASSERT_FALSE(service.offer(7, big_message(from_client("a", 3, "big"))));
  ASSERT_EQ(repairs.queued("big"), 1u);
  const auto replies = service.refuse_window(make_error(v1::Error::UNAVAILABLE, "stopping"));
  ASSERT_EQ(replies.size(), 1u);
  EXPECT_EQ(replies[0].first, 7u);
  EXPECT_EQ(replies[0].second.pool(), "big");
  EXPECT_EQ(replies[0].second.client_id(), "a");
  EXPECT_EQ(replies[0].second.client_batch(), 3u);
  EXPECT_EQ(replies[0].second.rejected().errors(0).code(), v1::Error::UNAVAILABLE);
  repairs.release("big");
  EXPECT_TRUE(service.finish_repairs().replies.empty());
  EXPECT_EQ(service.held_batches(), 0u);
}

}  // namespace
}  // namespace yoke::daemon
