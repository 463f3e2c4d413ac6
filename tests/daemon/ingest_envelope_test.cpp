// read_batch_envelope against decode_ingest: on messages built field by field the way
// Protobuf allows (fields repeated, a batch given twice and merged, the oneof switched to a
// retirement and back, unknown fields, known numbers with another wire type, explicit zeros)
// and on those messages cut short or with bytes changed, whenever both read a batch they name
// the same pool, client id and batch number; on every message the encoder writes (and on the
// generated ones without changed bytes) the envelope reads whatever decode_ingest reads as a
// batch. Sources: the Protobuf encoding (the last value of a field wins, a message field given
// twice is merged) is decode_ingest's, which the batch decoder's tests pin to the protocol.
#include <cstdint>
#include <random>
#include <string>
#include <variant>

#include <google/protobuf/stubs/logging.h>
#include <gtest/gtest.h>

#include "daemon/pools/pool_names.h"
#include "daemon/service/batch_decoder.h"
#include "daemon/service/ingest_envelope.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

void put_varint(std::string& out, std::uint64_t value) {
  while (value >= 0x80) {
    out.push_back(static_cast<char>((value & 0x7F) | 0x80));
    value >>= 7;
  }
  out.push_back(static_cast<char>(value));
}
void put_tag(std::string& out, std::uint32_t field, std::uint32_t wire_type) {
  put_varint(out, (std::uint64_t{field} << 3) | wire_type);
}
void put_bytes(std::string& out, std::uint32_t field, const std::string& bytes) {
  put_tag(out, field, 2);
  put_varint(out, bytes.size());
  out += bytes;
}

class MessageMaker {
 public:
  explicit MessageMaker(std::uint64_t seed) : random_(seed) {}
  std::uint64_t below(std::uint64_t n) { return random_() % n; }

  // An unknown field, or a known number with a wire type not its own.
  void put_stray(std::string& out, std::uint32_t field) {
    switch (below(4)) {
      case 0: put_tag(out, field, 0); put_varint(out, random_()); break;
      case 1: put_tag(out, field, 1); out.append(8, '\x07'); break;
      case 2: put_tag(out, field, 5); out.append(4, '\x09'); break;
      default: put_bytes(out, field, std::string(below(5), 'q')); break;
    }
  }
  std::string text() {
    static const char* const kTexts[] = {"", "a", "pool-1", "pool-2", "default", "bad name"};
    return kTexts[below(6)];
  }
  std::uint64_t number() {
    static const std::uint64_t kNumbers[] = {0, 1, 7, std::uint64_t{1} << 40, ~std::uint64_t{0}};
    return kNumbers[below(5)];
  }
  std::string event() {
    v1::Event wire = below(2) == 0 ? testing::wire_add(1 + below(9))
                                   : testing::wire_set(1 + below(9), 1 + below(9), 5);
    return wire.SerializeAsString();
  }
  std::string batch_fields() {
    std::string out;
    for (std::uint64_t i = 0, n = below(8); i < n; ++i) {
      switch (below(7)) {
        case 0: put_bytes(out, 1, text()); break;  // client_id
        case 1: put_tag(out, 2, 0); put_varint(out, number()); break;  // client_batch
        case 2: put_bytes(out, 3, text()); break;  // pool
        case 3: put_bytes(out, 4, event()); break;  // events
        case 4: put_tag(out, 5, 0); put_varint(out, number()); break;  // after_batch
        default: put_stray(out, static_cast<std::uint32_t>(1 + below(7))); break;
      }
    }
    return out;
  }
  std::string retire_fields() {
    std::string out;
    if (below(2) == 0) put_bytes(out, 3, text());
    if (below(2) == 0) put_bytes(out, 1, text());
    return out;
  }
  std::string request() {
    std::string out;
    for (std::uint64_t i = 0, n = 1 + below(6); i < n; ++i) {
      switch (below(6)) {
        case 0: put_tag(out, 1, 0); put_varint(out, below(3)); break;  // version 0..2
        case 1:
        case 2: put_bytes(out, 2, batch_fields()); break;
        case 3: put_bytes(out, 3, retire_fields()); break;
        default: put_stray(out, static_cast<std::uint32_t>(1 + below(5))); break;
      }
    }
    if (below(3) != 0) {
      put_tag(out, 1, 0);
      put_varint(out, 1);
    }
    return out;
  }
  std::string damaged(std::string message) {
    if (message.empty()) return message;
    if (below(2) == 0) return message.substr(0, below(message.size()));
    for (std::uint64_t i = 0, n = 1 + below(3); i < n; ++i) {
      message[below(message.size())] = static_cast<char>(random_());
    }
    return message;
  }

 private:
  std::mt19937_64 random_;
};

InputLimits wide_limits() {
  InputLimits limits;
  limits.max_message_bytes = std::uint64_t{1} << 30;
  limits.max_events_per_batch = std::uint64_t{1} << 30;
  return limits;
}

// Whether the two agree on `message`; `must_read`: the envelope must read a batch that
// decode_ingest reads.
::testing::AssertionResult agree(const std::string& message, bool must_read) {
  const std::optional<BatchEnvelope> envelope = read_batch_envelope(message);
  const DecodeResult decoded = decode_ingest(message, wide_limits());
  const auto* batch = std::get_if<DecodedBatch>(&decoded);
  if (batch == nullptr || batch->retire) return ::testing::AssertionSuccess();
  if (!envelope) {
    if (!must_read) return ::testing::AssertionSuccess();
    return ::testing::AssertionFailure() << "the envelope did not read a batch";
  }
  if (resolve_pool_name(envelope->pool) != batch->pool || envelope->client_id != batch->client_id ||
      envelope->client_batch != batch->client_batch) {
    return ::testing::AssertionFailure()
           << "envelope (" << envelope->pool << ", " << envelope->client_id << ", "
           << envelope->client_batch << ") against (" << batch->pool << ", " << batch->client_id
           << ", " << batch->client_batch << ")";
  }
  return ::testing::AssertionSuccess();
}

TEST(IngestEnvelope, NamesWhatTheDecoderReadsOnMessagesBuiltFieldByField) {
  const google::protobuf::LogSilencer quiet;  // protobuf logs each string that is not UTF-8
  MessageMaker maker(11);
  int batches = 0;
  for (int i = 0; i < 20000; ++i) {
    const std::string message = maker.request();
    ASSERT_TRUE(agree(message, true)) << "message " << i;
    ASSERT_TRUE(agree(maker.damaged(message), false)) << "message " << i << ", damaged";
    const DecodeResult decoded = decode_ingest(message, wide_limits());
    if (const auto* batch = std::get_if<DecodedBatch>(&decoded); batch && !batch->retire) {
      ++batches;
    }
  }
  EXPECT_GT(batches, 2000);  // the generator reaches accepted batches often
}

TEST(IngestEnvelope, ReadsWhatTheEncoderWrites) {
  const std::vector<v1::Event> events = {testing::wire_add(1), testing::wire_add(2),
                                         testing::wire_set(1, 2, 4)};
  const std::string message =
      testing::ingest_message(events, testing::from_client("client-7", 42, "harbour", 41));
  const std::optional<BatchEnvelope> envelope = read_batch_envelope(message);
  ASSERT_TRUE(envelope);
  EXPECT_EQ(envelope->pool, "harbour");
  EXPECT_EQ(envelope->client_id, "client-7");
  EXPECT_EQ(envelope->client_batch, 42u);
  EXPECT_TRUE(agree(message, true));
  EXPECT_FALSE(read_batch_envelope(testing::retire_message("harbour")));
  EXPECT_FALSE(read_batch_envelope(testing::ingest_message(testing::make_batch(events), 2)));
  EXPECT_FALSE(read_batch_envelope(""));
  EXPECT_FALSE(read_batch_envelope(std::string("\x0b\x0c", 2)));  // a group: left to Protobuf
  EXPECT_FALSE(read_batch_envelope(std::string(11, '\xff')));      // a varint past 64 bits
}

}  // namespace
}  // namespace yoke::daemon
