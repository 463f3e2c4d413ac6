// The journal records the daemon writes (a batch decoded into engine events, written back by
// SealedRecords on the committing thread) against those it wrote when it kept each batch's
// wire events and swapped them into the record: the same bytes. And the parse on an arena
// reused from one batch to the next reads each batch as a fresh parse does.
#include <cstdint>
#include <random>
#include <string>
#include <utility>
#include <variant>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/service/batch_decoder.h"
#include "daemon/service/sealed_records.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

using testing::BatchHeader;

// A valid event of any kind; ends, weights and kinds drawn so that zeros (left out on the
// wire), large keys and negative weights all come up.
v1::Event random_event(std::mt19937_64& random) {
  const auto key = [&random]() -> VertexKey {
    switch (random() % 4) {
      case 0: return 0;
      case 1: return random() % 50;
      case 2: return random();
      default: return random() % 100000;
    }
  };
  const Weight w = static_cast<Weight>(random() % 2001) - 1000;
  switch (random() % 6) {
    case 0: return testing::wire_add(key());
    case 1: return testing::wire_set(key(), key(), random() % 5 == 0 ? 0 : w);
    case 2: return testing::wire_unset(key(), key());
    case 3: return testing::wire_remove(key());
    case 4: return testing::wire_hold(key(), key());
    default: return testing::wire_release(key(), key());
  }
}

const InputLimits kWide{std::uint64_t{1} << 26, std::uint64_t{1} << 20};

// The record as the daemon wrote it before: the received batch's wire events swapped in.
v1::JournalRecord record_of_old(const v1::EventBatch& batch, std::uint64_t seq) {
  v1::JournalRecord record;
  record.set_pool(batch.pool());
  record.set_seq(seq);
  record.set_client_id(batch.client_id());
  record.set_client_batch(batch.client_batch());
  *record.mutable_events() = batch.events();
  record.set_wall_time_unix_us(1'700'000'000'000'000 + seq);
  record.set_window_start(7);
  return record;
}

TEST(SealedRecords, WriteTheBytesTheReceivedBatchesGave) {
  std::mt19937_64 random(2026);
  SealedRecords sealed;
  std::vector<v1::JournalRecord> old_records;
  for (std::uint64_t seq = 1; seq <= 300; ++seq) {
    std::vector<v1::Event> events(random() % 40);
    for (v1::Event& event : events) event = random_event(random);
    const BatchHeader header{"fleet-" + std::to_string(seq % 3), seq, "quay", 0};
    const v1::EventBatch batch = testing::make_batch(events, header);
    DecodeResult decoded = decode_ingest(testing::ingest_message(batch), kWide);
    ASSERT_TRUE(std::holds_alternative<DecodedBatch>(decoded)) << seq;
    DecodedBatch& mine = std::get<DecodedBatch>(decoded);
    old_records.push_back(record_of_old(batch, seq));
    v1::JournalRecord head = old_records.back();
    head.clear_events();
    sealed.records.push_back(std::move(head));
    sealed.events.push_back(std::move(mine.events));
  }
  const std::vector<v1::JournalRecord> records = std::move(sealed).complete();
  ASSERT_EQ(records.size(), old_records.size());
  for (std::size_t i = 0; i < records.size(); ++i) {
    EXPECT_EQ(records[i].SerializeAsString(), old_records[i].SerializeAsString()) << i;
  }
}

TEST(SealedRecords, ReusedParseReadsEachBatchAsAFreshOne) {
  std::mt19937_64 random(7);
  // Sizes up and down, one past the arena's first block (its other blocks are freed after
  // it), and refusals in between (a parse that fails leaves a message half filled).
  for (const std::size_t size : {30u, 3u, 0u, 20000u, 12u, 500u, 1u}) {
    std::vector<v1::Event> events(size);
    for (v1::Event& event : events) event = random_event(random);
    const v1::EventBatch batch = testing::make_batch(events, BatchHeader{"ferry", size, "", 0});
    const DecodeResult decoded = decode_ingest(testing::ingest_message(batch), kWide);
    ASSERT_TRUE(std::holds_alternative<DecodedBatch>(decoded)) << size;
    const DecodedBatch& mine = std::get<DecodedBatch>(decoded);
    EXPECT_EQ(mine.client_batch, size);
    ASSERT_EQ(mine.events.size(), size);
    for (std::size_t i = 0; i < size; ++i) {
      const auto fresh = decode_event(events[i], static_cast<std::uint32_t>(i));
      const Event& want = std::get<Event>(fresh);
      EXPECT_TRUE(mine.events[i].kind == want.kind && mine.events[i].u == want.u &&
                  mine.events[i].v == want.v && mine.events[i].w == want.w)
          << size << " " << i;
    }
    std::string broken = testing::ingest_message(batch);
    broken.resize(broken.size() / 2);  // cut in the middle of the events
    EXPECT_TRUE(std::holds_alternative<v1::Ack>(decode_ingest(broken, kWide))) << size;
  }
}

}  // namespace
}  // namespace yoke::daemon
