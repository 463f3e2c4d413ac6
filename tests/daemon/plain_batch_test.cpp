// read_plain_batch (the hand reader of a batch in the shape clients write) against
// decode_ingest_with_protobuf: whatever the hand reader takes, Protobuf takes and decodes to the
// same batch; clients' messages are taken; every message it leaves (Protobuf's last-wins and
// merge rules, unknown fields, UTF-8, refusals) gets from decode_ingest exactly what Protobuf
// gives. Mutated messages (flipped, cut, spliced bytes) hold the first promise too.
#include <cstdint>
#include <optional>
#include <random>
#include <string>
#include <utility>
#include <variant>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/service/batch_decoder.h"
#include "daemon/service/plain_batch.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

using testing::BatchHeader;

const InputLimits kLimits{std::uint64_t{1} << 22, 500};

::testing::AssertionResult same_batch(const DecodedBatch& a, const DecodedBatch& b) {
  if (a.pool != b.pool || a.client_id != b.client_id || a.client_batch != b.client_batch ||
      a.after_batch != b.after_batch || a.retire != b.retire || a.at_seq != b.at_seq ||
      a.events.size() != b.events.size()) {
    return ::testing::AssertionFailure() << "headers or event counts differ";
  }
  for (std::size_t i = 0; i < a.events.size(); ++i) {
    const Event& x = a.events[i];
    const Event& y = b.events[i];
    if (x.kind != y.kind || x.u != y.u || x.v != y.v || x.w != y.w) {
      return ::testing::AssertionFailure() << "event " << i << " differs";
    }
  }
  return ::testing::AssertionSuccess();
}

// decode_ingest gives what Protobuf gives: the same batch, or the same refusal.
::testing::AssertionResult decodes_as_protobuf(const std::string& message) {
  const DecodeResult got = decode_ingest(message, kLimits);
  const DecodeResult expected = decode_ingest_with_protobuf(message, kLimits);
  if (got.index() != expected.index()) return ::testing::AssertionFailure() << "kinds differ";
  if (const auto* batch = std::get_if<DecodedBatch>(&expected)) {
    return same_batch(std::get<DecodedBatch>(got), *batch);
  }
  if (std::get<v1::Ack>(got).SerializeAsString() !=
      std::get<v1::Ack>(expected).SerializeAsString()) {
    return ::testing::AssertionFailure() << std::get<v1::Ack>(got).ShortDebugString() << " vs "
                                         << std::get<v1::Ack>(expected).ShortDebugString();
  }
  return ::testing::AssertionSuccess();
}

// What the hand reader takes, Protobuf takes, as the same batch.
::testing::AssertionResult plain_agrees(const std::string& message) {
  const std::optional<DecodedBatch> plain = read_plain_batch(message, kLimits);
  if (!plain) return ::testing::AssertionSuccess();
  const DecodeResult expected = decode_ingest_with_protobuf(message, kLimits);
  if (const auto* ack = std::get_if<v1::Ack>(&expected)) {
    return ::testing::AssertionFailure() << "read by hand, refused by Protobuf: "
                                         << ack->ShortDebugString();
  }
  return same_batch(*plain, std::get<DecodedBatch>(expected));
}

BatchHeader random_header(std::mt19937_64& random) {
  BatchHeader header;
  if (random() % 3 != 0) header.client_id = "van-" + std::to_string(random() % 1000);
  if (random() % 4 != 0) header.client_batch = random() % 3 == 0 ? random() : random() % 100;
  const char* pools[] = {"", "default", "harbour", "north.quay:2", "bad name"};
  header.pool = pools[random() % 5];
  if (random() % 3 == 0) header.after_batch = random() % 50;
  return header;
}

std::string random_message(std::mt19937_64& random) {
  std::vector<v1::Event> events(random() % 30);
  for (v1::Event& event : events) event = testing::random_wire_event(random);
  return testing::ingest_message(events, random_header(random));
}

TEST(PlainBatch, ReadsClientMessagesAsProtobufDoes) {
  std::mt19937_64 random(77);
  std::size_t read = 0;
  for (int i = 0; i < 2000; ++i) {
    const std::string message = random_message(random);
    ASSERT_TRUE(plain_agrees(message)) << i;
    ASSERT_TRUE(decodes_as_protobuf(message)) << i;
    read += read_plain_batch(message, kLimits).has_value() ? 1 : 0;
  }
  EXPECT_GT(read, 1500u);  // all but the bad pool name's
}

TEST(PlainBatch, MutatedMessagesReadByHandAreProtobufs) {
  std::mt19937_64 random(1234);
  std::size_t read = 0;
  for (int i = 0; i < 20000; ++i) {
    std::string message = random_message(random);
    const int changes = 1 + static_cast<int>(random() % 3);
    for (int c = 0; c < changes && !message.empty(); ++c) {
      const std::size_t at = random() % message.size();
      switch (random() % 4) {
        case 0: message[at] = static_cast<char>(random()); break;
        case 1: message[at] = static_cast<char>(message[at] ^ (1 << (random() % 8))); break;
        case 2: message.resize(at); break;
        default: message.insert(at, message.substr(random() % message.size(), random() % 6));
      }
    }
    ASSERT_TRUE(plain_agrees(message)) << i;
    ASSERT_TRUE(decodes_as_protobuf(message)) << i;
    read += read_plain_batch(message, kLimits).has_value() ? 1 : 0;
  }
  EXPECT_GT(read, 100u);  // some mutations leave a plain batch (a changed key or weight)
}

// Raw wire bytes of a varint field and of a length-delimited one.
std::string varint_field(std::uint32_t field, std::uint64_t value) {
  std::string out(1, static_cast<char>(field << 3));
  for (; value >= 0x80; value >>= 7) out += static_cast<char>((value & 0x7F) | 0x80);
  out += static_cast<char>(value);
  return out;
}
std::string bytes_field(std::uint32_t field, const std::string& payload) {
  return std::string(1, static_cast<char>((field << 3) | 2)) +
         varint_field(0, payload.size()).substr(1) + payload;
}

TEST(PlainBatch, LeavesProtobufRulesToProtobuf) {
  const std::string set_edge = varint_field(1, 2) + varint_field(2, 5) + varint_field(3, 9) +
                               varint_field(4, 7);  // w = -4 zigzagged
  const std::string add = varint_field(1, 1) + varint_field(2, 5);
  const std::string events = bytes_field(4, add) + bytes_field(4, set_edge);
  const std::string pool = bytes_field(3, "harbour");
  const auto request = [](const std::string& batch) {
    return varint_field(1, 1) + bytes_field(2, batch);
  };
  const std::string plain = request(bytes_field(1, "van-1") + varint_field(2, 8) + pool + events);
  ASSERT_TRUE(read_plain_batch(plain, kLimits).has_value());
  EXPECT_EQ(read_plain_batch(plain, kLimits)->events.at(1).w, -4);
  EXPECT_TRUE(decodes_as_protobuf(plain));

  const std::vector<std::pair<const char*, std::string>> left = {
      {"a batch number given twice (the last wins)",
       request(varint_field(2, 8) + pool + events + varint_field(2, 9))},
      {"the batch given twice (merged)",
       request(pool + events) + bytes_field(2, varint_field(2, 4) + events)},
      {"a version given twice", varint_field(1, 7) + request(pool + events)},
      {"an event field given twice",
       request(pool + bytes_field(4, add + varint_field(2, 6)))},
      {"an unknown batch field", request(pool + events + varint_field(9, 1))},
      {"an unknown event field", request(pool + bytes_field(4, add + varint_field(7, 1)))},
      {"an unknown request field", request(pool + events) + varint_field(5, 1)},
      {"a UTF-8 client id", request(bytes_field(1, "fourgon-\xc3\xa9t\xc3\xa9") + pool + events)},
      {"a client id not UTF-8", request(bytes_field(1, "van-\xff") + pool + events)},
      {"a client id too long", request(bytes_field(1, std::string(129, 'v')) + pool + events)},
      {"a bad pool name", request(bytes_field(3, "two words") + events)},
      {"an event kind unknown", request(pool + bytes_field(4, varint_field(1, 9)))},
      {"an event of no kind", request(pool + bytes_field(4, varint_field(2, 3)))},
      {"v on ADD_VERTEX", request(pool + bytes_field(4, add + varint_field(3, 1)))},
      {"w on UNSET_EDGE",
       request(pool +
               bytes_field(4, varint_field(1, 3) + varint_field(2, 1) + varint_field(4, 2)))},
      {"a kind as a length-delimited field", request(pool + bytes_field(4, bytes_field(1, "x")))},
      {"version 2", varint_field(1, 2) + bytes_field(2, pool + events)},
      {"no version", bytes_field(2, pool + events)},
      {"a retirement", varint_field(1, 1) + bytes_field(3, pool)},
      {"no kind", varint_field(1, 1)},
      {"a cut event", request(pool + events).substr(0, request(pool + events).size() - 1)},
  };
  for (const auto& [what, message] : left) {
    EXPECT_FALSE(read_plain_batch(message, kLimits).has_value()) << what;
    EXPECT_TRUE(decodes_as_protobuf(message)) << what;
  }
  std::string many;
  for (std::size_t i = 0; i <= kLimits.max_events_per_batch; ++i) many += bytes_field(4, add);
  EXPECT_FALSE(read_plain_batch(request(pool + many), kLimits).has_value()) << "too many events";
  EXPECT_TRUE(decodes_as_protobuf(request(pool + many)));
  many.resize(many.size() - bytes_field(4, add).size());
  EXPECT_EQ(read_plain_batch(request(pool + many), kLimits)->events.size(),
            kLimits.max_events_per_batch);
}

}  // namespace
}  // namespace yoke::daemon
