// The first half of ingest: the bytes of one client message turned into a batch of engine
// events (or a pool's retirement, a batch of none marked `retire`), or into the Ack that
// refuses it. Checks everything that needs no pool state: size,
// Protobuf syntax, version, message kind, events per batch, each event's fields, the pool's
// name, the client id's length (kMaxClientIdBytes). The pool-dependent checks (unknown
// vertices, weights, limits) come after, in the PoolService. This is the fuzz target's path: it must never throw or crash on any input.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <variant>
#include <vector>

#include "daemon/config/daemon_config.h"
#include "yoke/events.h"
#include "yoke/v1/events.pb.h"
#include "yoke/v1/ingest.pb.h"

namespace yoke::daemon {

struct DecodedBatch {
  std::string pool;  // resolved: never empty
  std::string client_id;
  std::uint64_t client_batch = 0;
  std::uint64_t after_batch = 0;
  std::vector<Event> events;  // the journal record's, written back by SealedRecords
  // encode_events(events) when made beforehand (a new pool's big first batch, on the worker
  // that checks it): the seal moves these bytes to the journal instead of copying `events`.
  std::string journal_events;
  // A RetirePool read as a batch of no events: client id, batch and pool come from it.
  bool retire = false;
  std::uint64_t at_seq = 0;  // RetirePool.at_seq (retire only)
};

// A refusal: the Ack to send back (client id, batch and pool filled in when readable).
using DecodeResult = std::variant<DecodedBatch, v1::Ack>;

// A message in the shape clients write is read by hand (read_plain_batch, plain_batch.h: no
// Protobuf message per event); any other by decode_ingest_with_protobuf. O(message bytes).
DecodeResult decode_ingest(std::string_view message, const InputLimits& limits);

// The same decode by Protobuf alone, whatever the message: the reference read_plain_batch is
// held to. Parses on an arena kept per thread (its first block reused), so that a batch's
// events cost no allocation each.
DecodeResult decode_ingest_with_protobuf(std::string_view message, const InputLimits& limits);

// Whether a refusal is of a message that was not read as a batch: too large to read
// (OVERSIZED_MESSAGE), not a yoke.v1.IngestRequest (MALFORMED_MESSAGE without an event index:
// also a client id past kMaxClientIdBytes),
// another protocol version or kind (UNSUPPORTED_VERSION, UNKNOWN_MESSAGE_KIND), or not read at
// all (UNAVAILABLE: the daemon is shutting down). Every other refusal is of a batch. False for
// an accepted Ack.
bool refuses_unread_message(const v1::Ack& ack);

// One wire event as an engine event, or the MALFORMED_MESSAGE error (with event_index = index)
// that says which field is wrong. Also used to read journal records back.
std::variant<Event, v1::Error> decode_event(const v1::Event& wire, std::uint32_t index);

}  // namespace yoke::daemon
