// Conversions between the engine's types and their yoke.v1 wire forms (proto/yoke/v1), and the
// Error values every socket replies with.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>

#include "yoke/pool.h"
#include "yoke/v1/events.pb.h"
#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/pool.pb.h"
#include "yoke/v1/protocol.pb.h"

namespace yoke::daemon {

v1::Mode to_wire(Mode mode);
// Nothing for MODE_UNSPECIFIED and values this version does not know.
std::optional<Mode> from_wire(v1::Mode mode);

// How `pool` was created.
v1::PoolConfig pool_config(const Pool& pool);
// Nothing when a bound does not fit the engine's types.
std::optional<PoolLimits> from_wire(const v1::PoolLimits& limits);
// An empty pool made as `config` says; nullptr when the mode, a bound or the bonus cannot be
// read. Throws InputError when the engine refuses the settings.
std::unique_ptr<Pool> make_pool(const v1::PoolConfig& config);
v1::Pair to_wire(const MatchedPair& pair);
// to_wire into `wire`, every field set: a recycled message's old values are overwritten.
void write_wire(const MatchedPair& pair, v1::Pair& wire);
v1::RepairStats to_wire(const RepairStats& stats);

// An engine event as the ingest socket takes it: v only on edge events, w only on SET_EDGE
// (the schema refuses them elsewhere). decode_event (batch_decoder.h) reads it back.
v1::Event to_wire(const Event& event);
v1::Event::Kind wire_kind(EventKind kind);
// The engine kind of a wire kind's number: nothing for KIND_UNSPECIFIED or a number no kind has.
std::optional<EventKind> engine_kind(std::uint64_t wire_kind);
// The fields a kind carries on the wire: v for edge and pair events, w for SET_EDGE.
bool carries_v(EventKind kind);
inline bool carries_w(EventKind kind) { return kind == EventKind::set_edge; }
// to_wire into `wire`, which must be empty (a message added to a repeated field).
void write_wire(const Event& event, v1::Event& wire);

v1::Error::Code to_wire(EventErrorCode code);

// An Ack naming its batch, before its outcome is set; `accepted` and `refused` add one.
v1::Ack batch_ack(const std::string& client_id, std::uint64_t client_batch,
                  const std::string& pool);
v1::Ack accepted(v1::Ack ack, std::uint64_t seq, bool duplicate);
v1::Ack refused(v1::Ack ack, v1::Error error);

v1::Error make_error(v1::Error::Code code, std::string message,
                     std::optional<std::uint32_t> event_index = std::nullopt);

// "WEIGHT_OUT_OF_RANGE" and so on, for logs and metrics labels.
std::string error_code_name(v1::Error::Code code);

}  // namespace yoke::daemon
