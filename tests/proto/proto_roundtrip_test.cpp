// The yoke.v1 messages through their wire form and back: a batch, a rejecting acknowledgement, a
// published diff, query envelopes, journal and snapshot records. Also what a receiver relies on:
// garbage fails to parse instead of crashing, an envelope from a newer sender shows an empty
// oneof (UNKNOWN_MESSAGE_KIND), and the bytes of a fixed batch never change (the Python test
// checks the same bytes, so both languages agree on the wire form).
#include <gtest/gtest.h>

#include <google/protobuf/util/message_differencer.h>

#include <cstdint>
#include <limits>
#include <random>
#include <string>

#include "yoke/v1/events.pb.h"
#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/pool.pb.h"
#include "yoke/v1/protocol.pb.h"
#include "yoke/v1/publish.pb.h"
#include "yoke/v1/query.pb.h"
#include "yoke/v1/records.pb.h"

namespace yoke::v1 {
namespace {

using google::protobuf::Message;
using google::protobuf::util::MessageDifferencer;

constexpr std::uint64_t kMaxKey = std::numeric_limits<std::uint64_t>::max();
constexpr std::int64_t kMinWeight = std::numeric_limits<std::int64_t>::min();
constexpr std::int64_t kMaxWeight = std::numeric_limits<std::int64_t>::max();

// Serializes `in`, parses the bytes into a fresh T, and checks the two are equal field by field.
template <typename T>
T round_trip(const T& in) {
  std::string bytes;
  EXPECT_TRUE(in.SerializeToString(&bytes));
  T out;
  EXPECT_TRUE(out.ParseFromString(bytes));
  EXPECT_TRUE(MessageDifferencer::Equals(in, out))
      << "in:\n" << in.DebugString() << "out:\n" << out.DebugString();
  return out;
}

Event make_event(Event::Kind kind, std::uint64_t u, std::uint64_t v = 0, std::int64_t w = 0) {
  Event e;
  e.set_kind(kind);
  e.set_u(u);
  e.set_v(v);
  e.set_w(w);
  return e;
}

// The batch whose bytes are fixed below and in proto_roundtrip.py.
IngestRequest golden_request() {
  IngestRequest req;
  req.set_version(PROTOCOL_VERSION_1);
  EventBatch* batch = req.mutable_batch();
  batch->set_client_id("c1");
  batch->set_client_batch(7);
  batch->set_pool("harbour");
  *batch->add_events() = make_event(Event::ADD_VERTEX, 1);
  *batch->add_events() = make_event(Event::SET_EDGE, 1, 2, -5);
  *batch->add_events() = make_event(Event::UNSET_EDGE, 1, 2);
  *batch->add_events() = make_event(Event::REMOVE_VERTEX, kMaxKey);
  return req;
}

// Encoded independently by `protoc --encode=yoke.v1.IngestRequest` from the text form of
// golden_request(). A change here breaks every v1 client: add fields, never renumber.
constexpr char kGoldenRequestHex[] =
    "080112360a02633110071a07686172626f7572220408011001220808021001180220092206080310011802"
    "220d080410ffffffffffffffffff01";

std::string hex(const std::string& bytes) {
  static constexpr char kDigits[] = "0123456789abcdef";
  std::string out;
  for (unsigned char c : bytes) {
    out += kDigits[c >> 4];
    out += kDigits[c & 15];
  }
  return out;
}

TEST(ProtoRoundTrip, EventBatchInItsEnvelope) {
  IngestRequest in = golden_request();
  // The extremes of the key and weight types survive.
  *in.mutable_batch()->add_events() = make_event(Event::SET_EDGE, 0, kMaxKey, kMinWeight);
  *in.mutable_batch()->add_events() = make_event(Event::SET_EDGE, kMaxKey, 0, kMaxWeight);

  IngestRequest out = round_trip(in);
  ASSERT_EQ(out.kind_case(), IngestRequest::kBatch);
  const EventBatch& batch = out.batch();
  EXPECT_EQ(batch.client_id(), "c1");
  EXPECT_EQ(batch.client_batch(), 7u);
  EXPECT_EQ(batch.pool(), "harbour");
  ASSERT_EQ(batch.events_size(), 6);
  EXPECT_EQ(batch.events(0).kind(), Event::ADD_VERTEX);
  EXPECT_EQ(batch.events(1).kind(), Event::SET_EDGE);
  EXPECT_EQ(batch.events(1).w(), -5);
  EXPECT_EQ(batch.events(2).kind(), Event::UNSET_EDGE);
  EXPECT_EQ(batch.events(3).kind(), Event::REMOVE_VERTEX);
  EXPECT_EQ(batch.events(3).u(), kMaxKey);
  EXPECT_EQ(batch.events(4).w(), kMinWeight);
  EXPECT_EQ(batch.events(5).w(), kMaxWeight);
}

TEST(ProtoRoundTrip, GoldenBatchBytesAreStable) {
  std::string bytes;
  ASSERT_TRUE(golden_request().SerializeToString(&bytes));
  EXPECT_EQ(hex(bytes), kGoldenRequestHex);
}

TEST(ProtoRoundTrip, AckWithEventErrors) {
  IngestReply in;
  in.set_version(PROTOCOL_VERSION_1);
  Ack* ack = in.mutable_ack();
  ack->set_client_id("c1");
  ack->set_client_batch(8);
  ack->set_pool("default");
  Rejected* rejected = ack->mutable_rejected();
  Error* first = rejected->add_errors();
  first->set_code(Error::SELF_LOOP);
  first->set_message("set 4 4: an edge needs two different vertices");
  first->set_event_index(0);  // index 0 is present, not absent
  Error* second = rejected->add_errors();
  second->set_code(Error::WEIGHT_OUT_OF_RANGE);
  second->set_message("weight exceeds the pool's bound 4503599627370496");
  second->set_event_index(3);
  Error* whole = rejected->add_errors();
  whole->set_code(Error::TOO_MANY_EVENTS);
  whole->set_message("batch of 100001 events; the limit is 100000");

  IngestReply out = round_trip(in);
  ASSERT_EQ(out.kind_case(), IngestReply::kAck);
  ASSERT_EQ(out.ack().outcome_case(), Ack::kRejected);
  const auto& errors = out.ack().rejected().errors();
  ASSERT_EQ(errors.size(), 3);
  EXPECT_EQ(errors[0].code(), Error::SELF_LOOP);
  ASSERT_TRUE(errors[0].has_event_index());
  EXPECT_EQ(errors[0].event_index(), 0u);
  EXPECT_EQ(errors[1].code(), Error::WEIGHT_OUT_OF_RANGE);
  EXPECT_EQ(errors[1].event_index(), 3u);
  EXPECT_EQ(errors[2].code(), Error::TOO_MANY_EVENTS);
  EXPECT_FALSE(errors[2].has_event_index());
}

TEST(ProtoRoundTrip, AcceptedAck) {
  IngestReply in;
  in.set_version(PROTOCOL_VERSION_1);
  in.mutable_ack()->mutable_accepted()->set_seq(41);
  in.mutable_ack()->mutable_accepted()->set_duplicate(true);
  IngestReply out = round_trip(in);
  ASSERT_EQ(out.ack().outcome_case(), Ack::kAccepted);
  EXPECT_EQ(out.ack().accepted().seq(), 41u);
  EXPECT_TRUE(out.ack().accepted().duplicate());
}

TEST(ProtoRoundTrip, PublishedDiff) {
  Publication in;
  in.set_version(PROTOCOL_VERSION_1);
  Diff* diff = in.mutable_diff();
  diff->set_pool("harbour");
  diff->set_prev_seq(9);
  diff->set_seq(12);
  Pair* gone = diff->add_removed();
  gone->set_a(3);
  gone->set_b(8);
  gone->set_weight(-2);
  for (std::uint64_t k = 0; k < 3; ++k) {
    Pair* p = diff->add_added();
    p->set_a(10 * k);
    p->set_b(10 * k + 1);
    p->set_weight(static_cast<std::int64_t>(k) * 1000 + 1);
  }
  diff->set_weight(std::int64_t{1} << 52);
  diff->set_pairs(4);
  diff->mutable_timings()->set_repair_us(57);
  diff->mutable_timings()->set_commit_to_publish_us(640);
  diff->mutable_timings()->set_publish_unix_us(1'700'000'000'000'000);
  diff->mutable_stats()->set_events(3);
  diff->mutable_stats()->set_roots(2);
  diff->mutable_stats()->set_vertices_touched(130);

  Publication out = round_trip(in);
  ASSERT_EQ(out.kind_case(), Publication::kDiff);
  EXPECT_EQ(out.diff().seq(), 12u);
  EXPECT_EQ(out.diff().prev_seq(), 9u);
  ASSERT_EQ(out.diff().removed_size(), 1);
  EXPECT_EQ(out.diff().removed(0).weight(), -2);
  ASSERT_EQ(out.diff().added_size(), 3);
  EXPECT_EQ(out.diff().added(2).a(), 20u);
  EXPECT_EQ(out.diff().weight(), std::int64_t{1} << 52);
  EXPECT_EQ(out.diff().timings().commit_to_publish_us(), 640u);
  EXPECT_EQ(out.diff().stats().vertices_touched(), 130u);
  EXPECT_FALSE(out.diff().no_perfect_matching());
}

TEST(ProtoRoundTrip, QueryEnvelopes) {
  QueryRequest request;
  request.set_version(PROTOCOL_VERSION_1);
  request.set_request_id(5);
  request.mutable_explain()->set_vertex(17);
  request.mutable_explain()->set_max_alternatives(3);
  QueryRequest request_out = round_trip(request);
  ASSERT_EQ(request_out.kind_case(), QueryRequest::kExplain);
  EXPECT_EQ(request_out.pool(), "");  // the default pool
  EXPECT_EQ(request_out.explain().vertex(), 17u);

  QueryReply reply;
  reply.set_version(PROTOCOL_VERSION_1);
  reply.set_request_id(5);
  reply.set_pool("default");
  Explanation* why = reply.mutable_explain();
  why->set_seq(12);
  why->set_vertex(17);
  why->set_mate(4);
  why->set_pair_weight(9);
  why->set_dual_x2(8);
  Alternative* alt = why->add_alternatives();
  alt->set_other(9);
  alt->set_weight(3);
  alt->set_slack_x2(0);
  alt->set_other_mate(0);  // key 0 is a real vertex: present, not absent
  Alternative* lonely = why->add_alternatives();
  lonely->set_other(30);
  lonely->set_weight(1);
  lonely->set_slack_x2(14);
  QueryReply reply_out = round_trip(reply);
  ASSERT_EQ(reply_out.kind_case(), QueryReply::kExplain);
  ASSERT_TRUE(reply_out.explain().has_mate());
  EXPECT_EQ(reply_out.explain().mate(), 4u);
  ASSERT_EQ(reply_out.explain().alternatives_size(), 2);
  EXPECT_TRUE(reply_out.explain().alternatives(0).has_other_mate());
  EXPECT_EQ(reply_out.explain().alternatives(0).other_mate(), 0u);
  EXPECT_FALSE(reply_out.explain().alternatives(1).has_other_mate());
  EXPECT_EQ(reply_out.explain().alternatives(1).slack_x2(), 14);
  ASSERT_TRUE(reply_out.explain().has_pair_weight());
  EXPECT_EQ(reply_out.explain().pair_weight(), 9);

  QueryReply summary;
  summary.set_version(PROTOCOL_VERSION_1);
  summary.mutable_summary()->set_seq(12);
  summary.mutable_summary()->set_weight(-7);
  summary.mutable_summary()->set_mode(MODE_PERFECT);
  summary.mutable_summary()->set_no_perfect_matching(true);
  QueryReply summary_out = round_trip(summary);
  ASSERT_EQ(summary_out.kind_case(), QueryReply::kSummary);
  EXPECT_EQ(summary_out.summary().mode(), MODE_PERFECT);

  QueryReply error;
  error.set_version(PROTOCOL_VERSION_1);
  error.mutable_error()->set_code(Error::UNKNOWN_POOL);
  error.mutable_error()->set_message("no pool named \"docks\"");
  QueryReply error_out = round_trip(error);
  ASSERT_EQ(error_out.kind_case(), QueryReply::kError);
  EXPECT_EQ(error_out.error().code(), Error::UNKNOWN_POOL);
  EXPECT_FALSE(error_out.error().has_event_index());

  QueryReply exposed;
  exposed.mutable_mate()->set_vertex(3);  // mate absent: the vertex is exposed
  QueryReply exposed_out = round_trip(exposed);
  EXPECT_FALSE(exposed_out.mate().has_mate());
}

TEST(ProtoRoundTrip, JournalRecord) {
  JournalRecord in;
  in.set_pool("default");
  in.set_seq(1);
  in.set_client_id("loader-2");
  in.set_client_batch(1);
  *in.add_events() = make_event(Event::SET_EDGE, 5, 6, 11);
  *in.add_events() = make_event(Event::REMOVE_VERTEX, 6);
  in.set_wall_time_unix_us(1'700'000'000'123'456);
  in.mutable_created()->set_mode(MODE_MAX_CARDINALITY);
  in.mutable_created()->mutable_limits()->set_max_vertices(std::uint64_t{1} << 22);

  JournalRecord out = round_trip(in);
  EXPECT_EQ(out.seq(), 1u);
  ASSERT_EQ(out.events_size(), 2);
  EXPECT_EQ(out.events(0).w(), 11);
  ASSERT_TRUE(out.has_created());
  EXPECT_EQ(out.created().mode(), MODE_MAX_CARDINALITY);

  JournalRecord later;  // records after the first carry no config
  later.set_pool("default");
  later.set_seq(2);
  EXPECT_FALSE(round_trip(later).has_created());
}

TEST(ProtoRoundTrip, SnapshotRecordKeepsBinaryState) {
  SnapshotRecord in;
  in.set_pool("harbour");
  in.set_seq(1000);
  in.mutable_config()->set_mode(MODE_MAX_WEIGHT);
  ClientMark* mark = in.add_clients();
  mark->set_client_id("c1");
  mark->set_last_batch(77);
  mark->set_seq(998);
  in.set_engine_state_format(1);
  std::string state;
  for (int i = 0; i < 1024; ++i) state.push_back(static_cast<char>(i % 256));  // NULs and all
  in.set_engine_state(state);

  SnapshotRecord out = round_trip(in);
  EXPECT_EQ(out.engine_state(), state);
  ASSERT_EQ(out.clients_size(), 1);
  EXPECT_EQ(out.clients(0).last_batch(), 77u);
}

// Bytes that are not a valid encoding of any message: a receiver gets `false`, never a crash.
TEST(ProtoParse, GarbageFailsCleanly) {
  const std::string garbage[] = {
      std::string("\x0a\x10short", 7),           // length 16, 5 bytes follow
      std::string("\x08\xff\xff\xff", 4),        // varint cut off
      std::string("\x00\x01", 2),                // field number 0
      std::string("\x0f\x01", 2),                // wire type 7 does not exist
      std::string("\x0c", 1),                    // end of a group never started
      std::string("\x08\xff\xff\xff\xff\xff\xff\xff\xff\xff\xff\x01", 12),  // varint of 11 bytes
      std::string("\x12\x04\x0a\x02\xc3\x28", 6),  // batch.client_id not UTF-8
  };
  for (const std::string& bytes : garbage) {
    IngestRequest request;
    EXPECT_FALSE(request.ParseFromString(bytes)) << "parsed: " << hex(bytes);
  }
  QueryRequest query;
  EXPECT_FALSE(query.ParseFromString(std::string("\x1a\x05poo", 5)));
  JournalRecord record;
  EXPECT_FALSE(record.ParseFromString(std::string("\x2a\x7f\x08", 3)));
}

// Random bytes: parsing may succeed (protobuf is permissive) or fail, but must not crash, and a
// message that parsed serializes again. Run under the sanitizers, this is a small fuzz.
TEST(ProtoParse, RandomBytesNeverCrash) {
  std::mt19937_64 rng(20240611);
  int parsed = 0;
  for (int round = 0; round < 20000; ++round) {
    std::string bytes(rng() % 64, '\0');
    for (char& c : bytes) c = static_cast<char>(rng() & 0xff);
    IngestRequest request;
    if (request.ParseFromString(bytes)) {
      ++parsed;
      std::string again;
      EXPECT_TRUE(request.SerializeToString(&again));
    }
  }
  EXPECT_LT(parsed, 20000);  // most random bytes are not messages
}

// A newer sender's envelope: a kind this version does not know parses, with the oneof empty,
// so the daemon can answer UNKNOWN_MESSAGE_KIND rather than MALFORMED_MESSAGE.
TEST(ProtoParse, UnknownKindLeavesOneofEmpty) {
  // version 1, then field 99 (length-delimited) holding an empty message.
  const std::string bytes("\x08\x01\x9a\x06\x00", 5);
  IngestRequest request;
  ASSERT_TRUE(request.ParseFromString(bytes));
  EXPECT_EQ(request.version(), 1u);
  EXPECT_EQ(request.kind_case(), IngestRequest::KIND_NOT_SET);

  QueryRequest query;
  ASSERT_TRUE(query.ParseFromString(bytes));
  EXPECT_EQ(query.kind_case(), QueryRequest::KIND_NOT_SET);

  IngestRequest empty;  // zero bytes are a valid, empty envelope: version 0, no kind
  ASSERT_TRUE(empty.ParseFromString(std::string()));
  EXPECT_EQ(empty.version(), 0u);
  EXPECT_EQ(empty.kind_case(), IngestRequest::KIND_NOT_SET);
}

// An event kind from a later version parses as its number (proto3 enums are open); the daemon
// must check it against the kinds it knows.
TEST(ProtoParse, UnknownEventKindKeepsItsNumber) {
  const std::string bytes("\x08\x09\x10\x01", 4);  // kind 9, u 1
  Event event;
  ASSERT_TRUE(event.ParseFromString(bytes));
  EXPECT_EQ(static_cast<int>(event.kind()), 9);
  EXPECT_FALSE(Event::Kind_IsValid(event.kind()));
}

}  // namespace
}  // namespace yoke::v1
