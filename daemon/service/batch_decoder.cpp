#include "batch_decoder.h"

#include <memory>
#include <optional>
#include <utility>

#include <google/protobuf/arena.h>

#include "daemon/pools/pool_names.h"
#include "daemon/pools/retry_ledger.h"
#include "plain_batch.h"
#include "wire_types.h"

namespace yoke::daemon {
namespace {

v1::Ack refusal(v1::Error error) { return refused(v1::Ack(), std::move(error)); }

v1::Ack refusal_for(const v1::EventBatch& batch, const std::string& pool, v1::Error error) {
  return refused(batch_ack(batch.client_id(), batch.client_batch(), pool), std::move(error));
}

// The retry ledger keeps ids, so they are bounded; a retirement's too (it is journalled). The
// id is echoed for matching, but the refusal is counted and logged as a message not read
// (refuses_unread_message), so that the id reaches no log line.
std::optional<v1::Error> client_id_problem(const std::string& client_id) {
  if (client_id.size() <= kMaxClientIdBytes) return std::nullopt;
  return make_error(v1::Error::MALFORMED_MESSAGE,
                    "a client id has at most " + std::to_string(kMaxClientIdBytes) +
                        " bytes, not " + std::to_string(client_id.size()));
}

DecodeResult decode_retire(const v1::RetirePool& retire) {
  const std::string pool = resolve_pool_name(retire.pool());
  if (auto problem = pool_name_problem(pool)) {
    return refused(batch_ack(retire.client_id(), retire.client_batch(), ""),
                   make_error(v1::Error::UNKNOWN_POOL, *problem));
  }
  if (auto problem = client_id_problem(retire.client_id())) {
    return refused(batch_ack(retire.client_id(), retire.client_batch(), pool),
                   std::move(*problem));
  }
  DecodedBatch decoded;
  decoded.pool = pool;
  decoded.client_id = retire.client_id();
  decoded.client_batch = retire.client_batch();
  decoded.retire = true;
  decoded.at_seq = retire.at_seq();
  return decoded;
}

// Each thread parses into an arena whose first block is kept from message to message
// (Arena::Reset frees only the blocks a bigger message took beyond it): a batch's Event
// messages cost no allocation each, and nothing the parse made outlives decode_ingest (the
// DecodedBatch and the refusals copy what they keep).
constexpr std::size_t kParseBlockBytes = std::size_t{256} << 10;

class ParseArena {
 public:
  ParseArena() : arena_(kept()) {}
  ~ParseArena() { arena_.Reset(); }
  ParseArena(const ParseArena&) = delete;
  ParseArena& operator=(const ParseArena&) = delete;
  google::protobuf::Arena* get() { return &arena_; }

 private:
  static google::protobuf::Arena& kept() {
    thread_local const std::unique_ptr<char[]> block(new char[kParseBlockBytes]);
    thread_local google::protobuf::Arena arena(block.get(), kParseBlockBytes);
    return arena;
  }
  google::protobuf::Arena& arena_;
};

}  // namespace

std::variant<Event, v1::Error> decode_event(const v1::Event& wire, std::uint32_t index) {
  const auto malformed = [index](const std::string& why) {
    return make_error(v1::Error::MALFORMED_MESSAGE, why, index);
  };
  Event event;
  event.u = wire.u();
  const std::optional<EventKind> kind = engine_kind(static_cast<std::uint64_t>(wire.kind()));
  if (!kind) {
    return malformed("event kind " + std::to_string(static_cast<int>(wire.kind())) +
                     " is not one of ADD_VERTEX, SET_EDGE, UNSET_EDGE, REMOVE_VERTEX, "
                     "HOLD_PAIR, RELEASE_PAIR");
  }
  event.kind = *kind;
  const bool has_v = carries_v(event.kind);
  const bool has_w = carries_w(event.kind);
  if (!has_v && wire.v() != 0) {
    return malformed(v1::Event::Kind_Name(wire.kind()) + " carries v = " +
                     std::to_string(wire.v()) + ", which only edge and pair events may set");
  }
  if (!has_w && wire.w() != 0) {
    return malformed(v1::Event::Kind_Name(wire.kind()) + " carries w = " +
                     std::to_string(wire.w()) + ", which only SET_EDGE may set");
  }
  event.v = wire.v();
  event.w = wire.w();
  return event;
}

DecodeResult decode_ingest(std::string_view message, const InputLimits& limits) {
  if (auto plain = read_plain_batch(message, limits)) return std::move(*plain);
  return decode_ingest_with_protobuf(message, limits);
}

DecodeResult decode_ingest_with_protobuf(std::string_view message, const InputLimits& limits) {
  if (message.size() > limits.max_message_bytes) {
    return refusal(make_error(v1::Error::OVERSIZED_MESSAGE,
                              "message of " + std::to_string(message.size()) +
                                  " bytes exceeds the limit of " +
                                  std::to_string(limits.max_message_bytes)));
  }
  ParseArena arena;
  v1::IngestRequest& request =
      *google::protobuf::Arena::CreateMessage<v1::IngestRequest>(arena.get());
  if (!request.ParseFromArray(message.data(), static_cast<int>(message.size()))) {
    return refusal(make_error(v1::Error::MALFORMED_MESSAGE,
                              "the message is not a yoke.v1.IngestRequest"));
  }
  if (request.version() != v1::PROTOCOL_VERSION_1) {
    return refusal(make_error(v1::Error::UNSUPPORTED_VERSION,
                              "protocol version " + std::to_string(request.version()) +
                                  " is not spoken here; this daemon speaks version 1"));
  }
  if (request.kind_case() == v1::IngestRequest::kRetire) return decode_retire(request.retire());
  if (request.kind_case() != v1::IngestRequest::kBatch) {
    return refusal(make_error(v1::Error::UNKNOWN_MESSAGE_KIND,
                              "the request carries no kind this daemon knows (expected batch "
                              "or retire)"));
  }
  const v1::EventBatch& batch = request.batch();
  const std::string pool = resolve_pool_name(batch.pool());
  if (auto problem = pool_name_problem(pool)) {
    return refusal_for(batch, "", make_error(v1::Error::UNKNOWN_POOL, *problem));
  }
  if (auto problem = client_id_problem(batch.client_id())) {
    return refusal_for(batch, pool, std::move(*problem));
  }
  if (static_cast<std::uint64_t>(batch.events_size()) > limits.max_events_per_batch) {
    return refusal_for(batch, pool,
                       make_error(v1::Error::TOO_MANY_EVENTS,
                                  "batch of " + std::to_string(batch.events_size()) +
                                      " events exceeds the limit of " +
                                      std::to_string(limits.max_events_per_batch)));
  }
  DecodedBatch decoded;
  decoded.events.reserve(static_cast<std::size_t>(batch.events_size()));
  for (int i = 0; i < batch.events_size(); ++i) {
    auto event = decode_event(batch.events(i), static_cast<std::uint32_t>(i));
    if (auto* error = std::get_if<v1::Error>(&event)) {
      return refusal_for(batch, pool, std::move(*error));
    }
    decoded.events.push_back(std::get<Event>(event));
  }
  decoded.pool = pool;
  decoded.client_id = batch.client_id();
  decoded.client_batch = batch.client_batch();
  decoded.after_batch = batch.after_batch();
  return decoded;
}

bool refuses_unread_message(const v1::Ack& ack) {
  if (!ack.has_rejected() || ack.rejected().errors_size() == 0) return false;
  const v1::Error& first = ack.rejected().errors(0);
  switch (first.code()) {
    case v1::Error::OVERSIZED_MESSAGE:
    case v1::Error::UNSUPPORTED_VERSION:
    case v1::Error::UNKNOWN_MESSAGE_KIND:
    case v1::Error::UNAVAILABLE: return true;
    case v1::Error::MALFORMED_MESSAGE: return !first.has_event_index();
    default: return false;
  }
}

}  // namespace yoke::daemon
