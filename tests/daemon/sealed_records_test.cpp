// The journal records the daemon writes (a batch decoded into engine events, written back by
// SealedRecords on the committing thread) against those it wrote when it kept each batch's
// wire events and swapped them into the record: the same bytes. And the parse on an arena
// reused from one batch to the next reads each batch as a fresh parse does.
#include <algorithm>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <random>
#include <string>
#include <utility>
#include <variant>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/batch_decoder.h"
#include "daemon/service/sealed_records.h"
#include "service_test_util.h"
#include "tests/journal/journal_test_util.h"

namespace yoke::daemon {
namespace {

using testing::BatchHeader;

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
    for (v1::Event& event : events) event = testing::random_wire_event(random);
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

// A window of random batches, sealed: its records without events, and their engine events.
SealedRecords random_window(std::uint64_t seed, std::size_t batches) {
  std::mt19937_64 random(seed);
  SealedRecords sealed;
  for (std::uint64_t seq = 1; seq <= batches; ++seq) {
    std::vector<v1::Event> events(random() % 40);
    for (v1::Event& event : events) event = testing::random_wire_event(random);
    const v1::EventBatch batch =
        testing::make_batch(events, BatchHeader{"tug-" + std::to_string(seq % 4), seq, "", 0});
    v1::JournalRecord record = record_of_old(batch, seq);
    record.set_pool(seq % 3 == 0 ? "quay" : "dock");
    if (seq == 1) record.mutable_created()->set_mode(v1::MODE_MAX_WEIGHT);
    record.set_retired(seq == batches);
    record.clear_events();
    sealed.records.push_back(std::move(record));
    sealed.events.push_back(testing::engine_events(events));
  }
  return sealed;
}

std::string file_bytes(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

// Every segment file's bytes, in name order.
std::string journal_bytes(const std::filesystem::path& dir) {
  std::vector<std::filesystem::path> files;
  for (const auto& entry : std::filesystem::directory_iterator(dir)) {
    if (entry.path().extension() != ".lock") files.push_back(entry.path());
  }
  std::sort(files.begin(), files.end());
  std::string bytes;
  for (const auto& file : files) bytes += file.filename().string() + "\n" + file_bytes(file);
  return bytes;
}

TEST(SealedRecords, EncodedEventsAreTheBytesOfTheCompletedRecords) {
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    std::vector<v1::JournalRecord> whole = random_window(seed, 25).complete();
    storage::EncodedWindow encoded = random_window(seed, 25).encode();
    ASSERT_EQ(encoded.records.size(), whole.size());
    for (std::size_t i = 0; i < whole.size(); ++i) {
      v1::JournalRecord events_only;
      *events_only.mutable_events() = whole[i].events();
      EXPECT_EQ(encoded.events[i], events_only.SerializeAsString()) << seed << " " << i;
    }
    // What a log without its own commit_encoded() stores: the same records.
    const std::vector<v1::JournalRecord> decoded = storage::decoded_records(std::move(encoded));
    for (std::size_t i = 0; i < whole.size(); ++i) {
      EXPECT_EQ(decoded[i].SerializeAsString(), whole[i].SerializeAsString()) << seed << " " << i;
    }
  }
}

// Every other record's events encoded beforehand (a new pool's big first batch, encoded on the
// worker that checked it): complete() and encode() give what they give from the events.
SealedRecords encoded_beforehand(SealedRecords sealed) {
  sealed.encoded.resize(sealed.records.size() - 3);  // shorter than the records: the rest not
  for (std::size_t i = 0; i < sealed.encoded.size(); i += 2) {
    sealed.encoded[i] = encode_events(sealed.events[i]);
    sealed.events[i].clear();
  }
  return sealed;
}

TEST(SealedRecords, EventsEncodedBeforehandGiveTheSameRecords) {
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    const std::vector<v1::JournalRecord> whole = random_window(seed, 25).complete();
    const std::vector<v1::JournalRecord> ahead =
        encoded_beforehand(random_window(seed, 25)).complete();
    const storage::EncodedWindow plain = random_window(seed, 25).encode();
    const storage::EncodedWindow encoded = encoded_beforehand(random_window(seed, 25)).encode();
    ASSERT_EQ(ahead.size(), whole.size());
    ASSERT_EQ(encoded.events.size(), plain.events.size());
    for (std::size_t i = 0; i < whole.size(); ++i) {
      EXPECT_EQ(ahead[i].SerializeAsString(), whole[i].SerializeAsString()) << seed << " " << i;
      EXPECT_EQ(encoded.events[i], plain.events[i]) << seed << " " << i;
      EXPECT_EQ(encoded.records[i].SerializeAsString(), plain.records[i].SerializeAsString());
    }
  }
}

TEST(SealedRecords, TheJournalWritesTheSameBytesFromEncodedEvents) {
  journal::testing::TempDir dir;
  const journal::Options options = journal::testing::small_segments(std::uint64_t{1} << 14);
  auto plain = journal::JournalCommitLog::open(dir.path() / "plain", options);
  auto encoded = journal::JournalCommitLog::open(dir.path() / "encoded", options);
  for (std::uint64_t seed = 1; seed <= 10; ++seed) {  // several windows, over several segments
    const storage::CommittedWindow a = plain->commit(random_window(seed, 30).complete());
    const storage::CommittedWindow b = encoded->commit_encoded(random_window(seed, 30).encode());
    EXPECT_EQ(a.position, b.position);
    EXPECT_EQ(a.end, b.end);
    ASSERT_EQ(a.groups.size(), b.groups.size());
  }
  plain.reset();
  encoded.reset();
  const std::string bytes = journal_bytes(dir.path() / "plain");
  EXPECT_GT(bytes.size(), std::size_t{1} << 15);
  EXPECT_EQ(journal_bytes(dir.path() / "encoded"), bytes);
}

TEST(SealedRecords, ReusedParseReadsEachBatchAsAFreshOne) {
  std::mt19937_64 random(7);
  // Sizes up and down, one past the arena's first block (its other blocks are freed after
  // it), and refusals in between (a parse that fails leaves a message half filled).
  for (const std::size_t size : {30u, 3u, 0u, 20000u, 12u, 500u, 1u}) {
    std::vector<v1::Event> events(size);
    for (v1::Event& event : events) event = testing::random_wire_event(random);
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
