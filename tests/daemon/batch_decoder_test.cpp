// The ingest decoder (every refusal it can give, the mapping of good batches), pool names and
// the wire conversions. Expected codes come from the protocol's comments
// (proto/yoke/v1/protocol.proto, events.proto, ingest.proto).
#include <random>
#include <string>
#include <variant>
#include <vector>

#include <google/protobuf/stubs/logging.h>
#include <gtest/gtest.h>

#include "daemon/service/batch_decoder.h"
#include "daemon/pools/pool_names.h"
#include "daemon/service/sealed_records.h"
#include "daemon/service/wire_types.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

using testing::BatchHeader;
using testing::ingest_message;
using testing::make_batch;
using testing::wire_add;
using testing::wire_hold;
using testing::wire_remove;
using testing::wire_set;
using testing::wire_release;
using testing::wire_unset;

InputLimits small_limits() {
  InputLimits limits;
  limits.max_message_bytes = 4096;
  limits.max_events_per_batch = 4;
  return limits;
}

// The refusal's one error, after checking that the result is a refusal with exactly one.
v1::Error refusal_error(const DecodeResult& result) {
  const auto* ack = std::get_if<v1::Ack>(&result);
  if (ack == nullptr) {
    ADD_FAILURE() << "the message was decoded, not refused";
    return {};
  }
  EXPECT_TRUE(ack->has_rejected());
  EXPECT_EQ(ack->rejected().errors_size(), 1);
  if (ack->rejected().errors_size() == 0) return {};
  EXPECT_FALSE(ack->rejected().errors(0).message().empty());
  return ack->rejected().errors(0);
}

const v1::Ack& refusal_ack(const DecodeResult& result) { return std::get<v1::Ack>(result); }

const BatchHeader kHeader{"tram-4", 17, "harbour", 16};

TEST(BatchDecoder, GoodBatchMapsEveryKind) {
  const std::vector<v1::Event> events = {wire_add(7), wire_set(7, 8, -3), wire_unset(8, 7),
                                         wire_remove(7)};
  const v1::EventBatch batch = make_batch(events, kHeader);
  const DecodeResult result = decode_ingest(ingest_message(batch), small_limits());
  ASSERT_TRUE(std::holds_alternative<DecodedBatch>(result));
  const DecodedBatch& decoded = std::get<DecodedBatch>(result);
  EXPECT_EQ(decoded.pool, "harbour");
  EXPECT_EQ(decoded.client_id, "tram-4");
  EXPECT_EQ(decoded.client_batch, 17u);
  EXPECT_EQ(decoded.after_batch, 16u);
  ASSERT_EQ(decoded.events.size(), 4u);
  EXPECT_EQ(decoded.events[0].kind, EventKind::add_vertex);
  EXPECT_EQ(decoded.events[0].u, 7u);
  EXPECT_EQ(decoded.events[1].kind, EventKind::set_edge);
  EXPECT_EQ(decoded.events[1].u, 7u);
  EXPECT_EQ(decoded.events[1].v, 8u);
  EXPECT_EQ(decoded.events[1].w, -3);
  EXPECT_EQ(decoded.events[2].kind, EventKind::unset_edge);
  EXPECT_EQ(decoded.events[2].u, 8u);
  EXPECT_EQ(decoded.events[2].v, 7u);
  EXPECT_EQ(decoded.events[3].kind, EventKind::remove_vertex);
  EXPECT_EQ(decoded.events[3].u, 7u);
  // Written back (the journal record's events), they are the batch's as received.
  SealedRecords sealed;
  sealed.records.emplace_back();
  sealed.events.push_back(decoded.events);
  const std::vector<v1::JournalRecord> records = std::move(sealed).complete();
  ASSERT_EQ(records.size(), 1u);
  v1::EventBatch written;
  *written.mutable_events() = records[0].events();
  EXPECT_EQ(written.SerializeAsString(), make_batch(events, BatchHeader{}).SerializeAsString());
}

TEST(BatchDecoder, HoldAndReleaseCarryBothEnds) {
  // events.proto: HOLD_PAIR and RELEASE_PAIR name the pair {u, v}; the decoder checks form only
  // (whether the edge exists or an end is held is the pool's check).
  const VertexKey big = ~VertexKey{0};
  const DecodeResult result = decode_ingest(
      ingest_message({wire_set(4, 9, 2), wire_hold(4, 9), wire_release(9, 4), wire_hold(big, 0)},
                     kHeader),
      small_limits());
  ASSERT_TRUE(std::holds_alternative<DecodedBatch>(result));
  const DecodedBatch& decoded = std::get<DecodedBatch>(result);
  ASSERT_EQ(decoded.events.size(), 4u);
  EXPECT_EQ(decoded.events[1].kind, EventKind::hold_pair);
  EXPECT_EQ(decoded.events[1].u, 4u);
  EXPECT_EQ(decoded.events[1].v, 9u);
  EXPECT_EQ(decoded.events[1].w, 0);
  EXPECT_EQ(decoded.events[2].kind, EventKind::release_pair);
  EXPECT_EQ(decoded.events[2].u, 9u);
  EXPECT_EQ(decoded.events[2].v, 4u);
  EXPECT_EQ(decoded.events[3].kind, EventKind::hold_pair);
  EXPECT_EQ(decoded.events[3].u, big);
  EXPECT_EQ(decoded.events[3].v, 0u);
  // u == v is the pool's SELF_LOOP, as for UNSET_EDGE: the decoder passes it on.
  const auto loop = decode_event(wire_hold(6, 6), 0);
  ASSERT_TRUE(std::holds_alternative<Event>(loop));
  EXPECT_EQ(std::get<Event>(loop).kind, EventKind::hold_pair);
}

TEST(BatchDecoder, FullRangeKeysAndWeightsSurvive) {
  const VertexKey big = ~VertexKey{0};
  const DecodeResult result = decode_ingest(
      ingest_message({wire_set(big, 0, Weight{1} << 52), wire_set(0, 1, -(Weight{1} << 52))}),
      small_limits());
  ASSERT_TRUE(std::holds_alternative<DecodedBatch>(result));
  const DecodedBatch& decoded = std::get<DecodedBatch>(result);
  EXPECT_EQ(decoded.events[0].u, big);
  EXPECT_EQ(decoded.events[0].v, 0u);
  EXPECT_EQ(decoded.events[0].w, Weight{1} << 52);
  EXPECT_EQ(decoded.events[1].w, -(Weight{1} << 52));
}

TEST(BatchDecoder, EmptyPoolNameIsDefaultAndEmptyBatchIsFine) {
  const DecodeResult result =
      decode_ingest(ingest_message(std::vector<v1::Event>{}, BatchHeader{}), small_limits());
  ASSERT_TRUE(std::holds_alternative<DecodedBatch>(result));
  EXPECT_EQ(std::get<DecodedBatch>(result).pool, "default");
  EXPECT_TRUE(std::get<DecodedBatch>(result).events.empty());
}

TEST(BatchDecoder, OversizedMessageIsNotParsed) {
  InputLimits limits = small_limits();
  const std::string message = ingest_message({wire_set(1, 2, 3)}, kHeader);
  limits.max_message_bytes = message.size();
  EXPECT_TRUE(std::holds_alternative<DecodedBatch>(decode_ingest(message, limits)));
  limits.max_message_bytes = message.size() - 1;
  const DecodeResult result = decode_ingest(message, limits);
  const v1::Error error = refusal_error(result);
  EXPECT_EQ(error.code(), v1::Error::OVERSIZED_MESSAGE);
  EXPECT_FALSE(error.has_event_index());
  // Not parsed, so nothing of the batch is echoed.
  EXPECT_EQ(refusal_ack(result).client_id(), "");
  EXPECT_EQ(refusal_ack(result).client_batch(), 0u);
  EXPECT_EQ(refusal_ack(result).pool(), "");
}

TEST(BatchDecoder, GarbageBytesAreMalformed) {
  const std::vector<std::string> garbage = {
      std::string("\x12\x05\x0a\x01", 4),    // field 2 claims 5 bytes, 2 follow
      std::string("\x00", 1),                 // field number 0
      std::string("\x0f", 1),                 // wire type 7 does not exist
      "not protobuf at all",                  // 'n': field 13 with wire type 6
      std::string("\x08\x80\x80\x80\x80\x80\x80\x80\x80\x80\x80\x01", 12),  // varint too long
  };
  for (const std::string& bytes : garbage) {
    const DecodeResult result = decode_ingest(bytes, small_limits());
    const v1::Error error = refusal_error(result);
    EXPECT_EQ(error.code(), v1::Error::MALFORMED_MESSAGE) << ::testing::PrintToString(bytes);
    EXPECT_FALSE(error.has_event_index());
    EXPECT_EQ(refusal_ack(result).client_id(), "");
  }
}

TEST(BatchDecoder, UnknownEventKindIsMalformedWithItsIndex) {
  for (const int kind : {0, 7, 99, -1}) {
    v1::Event odd;
    odd.set_kind(static_cast<v1::Event::Kind>(kind));
    odd.set_u(3);
    const DecodeResult result =
        decode_ingest(ingest_message({wire_add(1), wire_add(2), odd}, kHeader), small_limits());
    const v1::Error error = refusal_error(result);
    EXPECT_EQ(error.code(), v1::Error::MALFORMED_MESSAGE) << "kind " << kind;
    ASSERT_TRUE(error.has_event_index());
    EXPECT_EQ(error.event_index(), 2u);
    // The batch was readable: the Ack echoes it.
    EXPECT_EQ(refusal_ack(result).client_id(), "tram-4");
    EXPECT_EQ(refusal_ack(result).client_batch(), 17u);
    EXPECT_EQ(refusal_ack(result).pool(), "harbour");
  }
}

// What the metrics count as a refused message rather than a refused batch.
TEST(BatchDecoder, UnreadMessagesAreToldFromBatches) {
  const InputLimits limits = small_limits();
  // Not read as a batch: garbage, too large, another version, no batch in it.
  EXPECT_TRUE(refuses_unread_message(refusal_ack(decode_ingest("not protobuf at all", limits))));
  InputLimits tiny = limits;
  tiny.max_message_bytes = 3;
  EXPECT_TRUE(refuses_unread_message(
      refusal_ack(decode_ingest(ingest_message({wire_add(1)}, kHeader), tiny))));
  v1::IngestRequest other_version;
  other_version.set_version(7);
  other_version.mutable_batch();
  EXPECT_TRUE(refuses_unread_message(
      refusal_ack(decode_ingest(other_version.SerializeAsString(), limits))));
  v1::IngestRequest no_kind;
  no_kind.set_version(v1::PROTOCOL_VERSION_1);
  EXPECT_TRUE(
      refuses_unread_message(refusal_ack(decode_ingest(no_kind.SerializeAsString(), limits))));
  // Read as a batch, then refused: a bad event (MALFORMED_MESSAGE with its index), too many
  // events.
  v1::Event odd;
  odd.set_kind(static_cast<v1::Event::Kind>(99));
  EXPECT_FALSE(refuses_unread_message(
      refusal_ack(decode_ingest(ingest_message({wire_add(1), odd}, kHeader), limits))));
  EXPECT_FALSE(refuses_unread_message(refusal_ack(decode_ingest(
      ingest_message({wire_add(1), wire_add(2), wire_add(3), wire_add(4), wire_add(5)}, kHeader),
      limits))));
  EXPECT_FALSE(refuses_unread_message(v1::Ack()));  // not a refusal at all
}

TEST(BatchDecoder, FieldsAnEventKindDoesNotHaveAreMalformed) {
  v1::Event add_with_v = wire_add(1);
  add_with_v.set_v(2);
  v1::Event add_with_w = wire_add(1);
  add_with_w.set_w(5);
  v1::Event remove_with_v = wire_remove(1);
  remove_with_v.set_v(9);
  v1::Event unset_with_w = wire_unset(1, 2);
  unset_with_w.set_w(-4);
  // events.proto: w is SET_EDGE's only; a hold has no weight to set.
  v1::Event hold_with_w = wire_hold(1, 2);
  hold_with_w.set_w(7);
  v1::Event release_with_w = wire_release(1, 2);
  release_with_w.set_w(-1);
  for (const v1::Event& bad :
       {add_with_v, add_with_w, remove_with_v, unset_with_w, hold_with_w, release_with_w}) {
    const DecodeResult result =
        decode_ingest(ingest_message({wire_set(1, 2, 1), bad}, kHeader), small_limits());
    const v1::Error error = refusal_error(result);
    EXPECT_EQ(error.code(), v1::Error::MALFORMED_MESSAGE) << bad.ShortDebugString();
    ASSERT_TRUE(error.has_event_index());
    EXPECT_EQ(error.event_index(), 1u);
    EXPECT_EQ(refusal_ack(result).client_id(), "tram-4");
    EXPECT_EQ(refusal_ack(result).client_batch(), 17u);
  }
}

TEST(BatchDecoder, FirstBadEventIsTheOneReported) {
  v1::Event bad = wire_add(1);
  bad.set_w(1);
  const v1::Error error = refusal_error(decode_ingest(
      ingest_message({wire_add(1), bad, wire_add(2), bad}, kHeader), small_limits()));
  ASSERT_TRUE(error.has_event_index());
  EXPECT_EQ(error.event_index(), 1u);
}

TEST(BatchDecoder, DecodeEventCarriesTheGivenIndex) {
  v1::Event bad = wire_remove(4);
  bad.set_w(1);
  const auto result = decode_event(bad, 41);
  ASSERT_TRUE(std::holds_alternative<v1::Error>(result));
  EXPECT_EQ(std::get<v1::Error>(result).code(), v1::Error::MALFORMED_MESSAGE);
  EXPECT_EQ(std::get<v1::Error>(result).event_index(), 41u);
  const auto good = decode_event(wire_unset(4, 5), 0);
  ASSERT_TRUE(std::holds_alternative<Event>(good));
  EXPECT_EQ(std::get<Event>(good).kind, EventKind::unset_edge);
}

TEST(BatchDecoder, VersionsOtherThanOneAreUnsupported) {
  for (const std::uint32_t version : {0u, 2u}) {
    const v1::Error error = refusal_error(
        decode_ingest(ingest_message(make_batch({wire_add(1)}, kHeader), version), small_limits()));
    EXPECT_EQ(error.code(), v1::Error::UNSUPPORTED_VERSION) << "version " << version;
    EXPECT_FALSE(error.has_event_index());
  }
}

TEST(BatchDecoder, EmptyOrUnknownKindIsUnknownMessageKind) {
  v1::IngestRequest empty;
  empty.set_version(1);
  EXPECT_EQ(refusal_error(decode_ingest(empty.SerializeAsString(), small_limits())).code(),
            v1::Error::UNKNOWN_MESSAGE_KIND);
  // A later version's kind (field 7, unknown here) parses but leaves the oneof empty.
  const std::string newer("\x08\x01\x3a\x02\x08\x01", 6);
  EXPECT_EQ(refusal_error(decode_ingest(newer, small_limits())).code(),
            v1::Error::UNKNOWN_MESSAGE_KIND);
}

TEST(BatchDecoder, TooManyEvents) {
  const std::vector<v1::Event> four = {wire_add(1), wire_add(2), wire_add(3), wire_add(4)};
  EXPECT_TRUE(std::holds_alternative<DecodedBatch>(
      decode_ingest(ingest_message(four, kHeader), small_limits())));
  std::vector<v1::Event> five = four;
  five.push_back(wire_add(5));
  const DecodeResult result = decode_ingest(ingest_message(five, kHeader), small_limits());
  const v1::Error error = refusal_error(result);
  EXPECT_EQ(error.code(), v1::Error::TOO_MANY_EVENTS);
  EXPECT_FALSE(error.has_event_index());
  EXPECT_EQ(refusal_ack(result).client_id(), "tram-4");
  EXPECT_EQ(refusal_ack(result).client_batch(), 17u);
  EXPECT_EQ(refusal_ack(result).pool(), "harbour");
}

TEST(BatchDecoder, BadPoolNamesAreUnknownPool) {
  const std::vector<std::string> bad = {
      std::string(129, 'a'), "north/south", "north south", "caf\xc3\xa9", "tab\there",
      std::string("nul\0x", 5)};
  for (const std::string& name : bad) {
    BatchHeader header = kHeader;
    header.pool = name;
    const DecodeResult result = decode_ingest(ingest_message({wire_add(1)}, header), small_limits());
    const v1::Error error = refusal_error(result);
    EXPECT_EQ(error.code(), v1::Error::UNKNOWN_POOL) << ::testing::PrintToString(name);
    EXPECT_FALSE(error.has_event_index());
    EXPECT_EQ(refusal_ack(result).client_id(), "tram-4");
    EXPECT_EQ(refusal_ack(result).client_batch(), 17u);
    EXPECT_EQ(refusal_ack(result).pool(), "");  // not a name it may echo
  }
  // A name that is not UTF-8 does not even parse: proto3 strings must be UTF-8.
  {
    const google::protobuf::LogSilencer quiet;  // protobuf logs the bad string twice
    v1::EventBatch batch = make_batch({wire_add(1)}, kHeader);
    batch.set_pool("caf\xe9");  // Latin-1
    EXPECT_EQ(refusal_error(decode_ingest(ingest_message(batch), small_limits())).code(),
              v1::Error::MALFORMED_MESSAGE);
  }
  for (const std::string& name : {std::string(128, 'z'), std::string("Quay-7.east_side:2")}) {
    BatchHeader header = kHeader;
    header.pool = name;
    const DecodeResult result = decode_ingest(ingest_message({wire_add(1)}, header), small_limits());
    ASSERT_TRUE(std::holds_alternative<DecodedBatch>(result)) << name;
    EXPECT_EQ(std::get<DecodedBatch>(result).pool, name);
  }
}

// The fuzz target's promise: any bytes give a result, never an exception or a crash.
TEST(BatchDecoder, RandomAndMutatedBytesNeverThrow) {
  const google::protobuf::LogSilencer quiet;  // protobuf logs each string that is not UTF-8
  std::mt19937_64 random(2024);
  const std::string good = ingest_message(
      {wire_add(1), wire_set(1, 2, 5), wire_unset(1, 2), wire_remove(1)}, kHeader);
  for (int round = 0; round < 3000; ++round) {
    std::string bytes;
    if (round % 2 == 0) {
      bytes.resize(random() % 64);
      for (char& c : bytes) c = static_cast<char>(random() & 0xFF);
    } else {
      bytes = good;
      const int flips = 1 + static_cast<int>(random() % 4);
      for (int f = 0; f < flips; ++f) {
        bytes[random() % bytes.size()] ^= static_cast<char>(1 << (random() % 8));
      }
      if (random() % 4 == 0) bytes.resize(random() % bytes.size());
    }
    DecodeResult result;
    ASSERT_NO_THROW(result = decode_ingest(bytes, small_limits()));
    if (const auto* ack = std::get_if<v1::Ack>(&result)) {
      EXPECT_TRUE(ack->has_rejected());
      EXPECT_GE(ack->rejected().errors_size(), 1);
    } else {
      EXPECT_FALSE(std::get<DecodedBatch>(result).pool.empty());
    }
  }
}

TEST(PoolNames, EmptyMeansDefault) {
  EXPECT_EQ(resolve_pool_name(""), "default");
  EXPECT_EQ(resolve_pool_name("harbour"), "harbour");
  EXPECT_FALSE(pool_name_problem("default").has_value());
}

TEST(PoolNames, OnlyShortPlainAsciiNames) {
  EXPECT_FALSE(pool_name_problem("a").has_value());
  EXPECT_FALSE(pool_name_problem("Vardolune-Ekkavan_2.north:ferries").has_value());
  EXPECT_FALSE(pool_name_problem(std::string(128, 'q')).has_value());
  EXPECT_TRUE(pool_name_problem(std::string(129, 'q')).has_value());
  for (const std::string bad : {"a/b", "a b", "a\\b", "\xff", "a*", "a\nb"}) {
    EXPECT_TRUE(pool_name_problem(bad).has_value()) << ::testing::PrintToString(bad);
  }
}

TEST(WireTypes, ModesRoundTrip) {
  for (const Mode mode : {Mode::max_weight, Mode::max_cardinality, Mode::perfect}) {
    EXPECT_EQ(from_wire(to_wire(mode)), mode);
  }
  EXPECT_EQ(to_wire(Mode::max_weight), v1::MODE_MAX_WEIGHT);
  EXPECT_EQ(to_wire(Mode::perfect), v1::MODE_PERFECT);
  EXPECT_FALSE(from_wire(v1::MODE_UNSPECIFIED).has_value());
  EXPECT_FALSE(from_wire(static_cast<v1::Mode>(42)).has_value());
}

TEST(WireTypes, LimitsRoundTripAndRefuseWhatDoesNotFit) {
  PoolLimits limits;
  limits.max_vertices = 1000;
  limits.max_edges = 5000;
  limits.max_abs_weight = 77;
  const Pool pool(Mode::max_cardinality, limits, 5);
  const v1::PoolConfig wire = pool_config(pool);
  EXPECT_EQ(wire.mode(), v1::MODE_MAX_CARDINALITY);
  EXPECT_EQ(wire.churn_bonus(), 5u);
  const std::unique_ptr<Pool> made = make_pool(wire);
  ASSERT_NE(made, nullptr);
  EXPECT_EQ(made->churn_bonus(), 5);
  EXPECT_EQ(made->limits().max_abs_weight, 77);
  const auto back = from_wire(wire.limits());
  ASSERT_TRUE(back.has_value());
  EXPECT_EQ(back->max_vertices, 1000u);
  EXPECT_EQ(back->max_edges, 5000u);
  EXPECT_EQ(back->max_abs_weight, 77);
  v1::PoolLimits too_big;
  too_big.set_max_abs_weight(std::uint64_t{1} << 63);
  EXPECT_FALSE(from_wire(too_big).has_value());
}

TEST(WireTypes, PairsStatsAndErrors) {
  const v1::Pair pair = to_wire(MatchedPair{3, 9, -2});
  EXPECT_EQ(pair.a(), 3u);
  EXPECT_EQ(pair.b(), 9u);
  EXPECT_EQ(pair.weight(), -2);
  RepairStats stats;
  stats.events = 4;
  stats.roots = 1;
  stats.searches = 2;
  stats.augmentations = 3;
  stats.blossoms_dissolved = 5;
  stats.vertices_touched = 6;
  stats.initial_solve = true;
  const v1::RepairStats wire = to_wire(stats);
  EXPECT_EQ(wire.events(), 4u);
  EXPECT_EQ(wire.roots(), 1u);
  EXPECT_EQ(wire.searches(), 2u);
  EXPECT_EQ(wire.augmentations(), 3u);
  EXPECT_EQ(wire.blossoms_dissolved(), 5u);
  EXPECT_EQ(wire.vertices_touched(), 6u);
  EXPECT_TRUE(wire.initial_solve());

  EXPECT_EQ(to_wire(EventErrorCode::vertex_exists), v1::Error::VERTEX_EXISTS);
  EXPECT_EQ(to_wire(EventErrorCode::self_loop), v1::Error::SELF_LOOP);
  EXPECT_EQ(to_wire(EventErrorCode::weight_out_of_range), v1::Error::WEIGHT_OUT_OF_RANGE);
  EXPECT_EQ(to_wire(EventErrorCode::unknown_vertex), v1::Error::UNKNOWN_VERTEX);
  EXPECT_EQ(to_wire(EventErrorCode::unknown_edge), v1::Error::UNKNOWN_EDGE);
  EXPECT_EQ(to_wire(EventErrorCode::limit_exceeded), v1::Error::POOL_LIMIT_EXCEEDED);
  EXPECT_EQ(to_wire(EventErrorCode::already_held), v1::Error::ALREADY_HELD);
  EXPECT_EQ(to_wire(EventErrorCode::not_held), v1::Error::NOT_HELD);

  const v1::Error with_index = make_error(v1::Error::SELF_LOOP, "loop", 0);
  EXPECT_TRUE(with_index.has_event_index());
  EXPECT_EQ(with_index.event_index(), 0u);
  EXPECT_FALSE(make_error(v1::Error::INTERNAL, "x").has_event_index());
  EXPECT_EQ(error_code_name(v1::Error::WEIGHT_OUT_OF_RANGE), "WEIGHT_OUT_OF_RANGE");
  EXPECT_EQ(error_code_name(v1::Error::OUT_OF_ORDER), "OUT_OF_ORDER");
  EXPECT_EQ(error_code_name(v1::Error::ALREADY_HELD), "ALREADY_HELD");
  EXPECT_EQ(error_code_name(v1::Error::NOT_HELD), "NOT_HELD");
}

TEST(WireTypes, EveryEventKindRoundTrips) {
  // to_wire(Event) is what `yoke send` puts on the wire; the decoder must give it back, with v
  // only on edge and pair events and w only on SET_EDGE.
  const std::vector<Event> events = {
      {EventKind::add_vertex, 5, 0, 0},    {EventKind::set_edge, 5, 6, -8},
      {EventKind::unset_edge, 6, 5, 0},    {EventKind::remove_vertex, 5, 0, 0},
      {EventKind::hold_pair, 11, 12, 0},    {EventKind::release_pair, 12, 11, 0}};
  const std::vector<v1::Event::Kind> kinds = {v1::Event::ADD_VERTEX,    v1::Event::SET_EDGE,
                                              v1::Event::UNSET_EDGE,    v1::Event::REMOVE_VERTEX,
                                              v1::Event::HOLD_PAIR,      v1::Event::RELEASE_PAIR};
  for (std::size_t i = 0; i < events.size(); ++i) {
    const v1::Event wire = to_wire(events[i]);
    EXPECT_EQ(wire.kind(), kinds[i]) << i;
    const auto back = decode_event(wire, static_cast<std::uint32_t>(i));
    ASSERT_TRUE(std::holds_alternative<Event>(back)) << wire.ShortDebugString();
    const Event& event = std::get<Event>(back);
    EXPECT_EQ(event.kind, events[i].kind) << i;
    EXPECT_EQ(event.u, events[i].u) << i;
    EXPECT_EQ(event.v, events[i].v) << i;
    EXPECT_EQ(event.w, events[i].w) << i;
  }
}

}  // namespace
}  // namespace yoke::daemon
