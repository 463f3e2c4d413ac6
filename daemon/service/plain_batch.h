// An ingest message in the shape every client encoder writes, read without Protobuf: a batch's
// events go straight into engine events, with no yoke.v1.Event message made for each.
// Not a contract: decode_ingest (batch_decoder.h) tries this first and parses with Protobuf
// whatever it gives nothing for. The promise: what this reads, decode_ingest's Protobuf path
// accepts and decodes to the same DecodedBatch (tests/daemon/plain_batch_test.cpp holds the
// two against each other). It never refuses: anything unusual or wrong (a field given twice,
// an unknown field, a field of the wrong wire type, a string not ASCII, an event kind or field
// the rules refuse, a bad pool name, too many events, a retirement) gives nothing.
// Never throws but for memory; reads only inside `message`.
#pragma once

#include <optional>
#include <string_view>

#include "batch_decoder.h"
#include "daemon/config/daemon_config.h"

namespace yoke::daemon {

// The batch of a version-1 IngestRequest: at most once each of version and batch at the top;
// in the batch at most once each of client_id, client_batch, pool and after_batch, and any
// number of events; in an event at most once each of kind, u, v and w, every one a varint.
// O(message bytes).
std::optional<DecodedBatch> read_plain_batch(std::string_view message, const InputLimits& limits);

}  // namespace yoke::daemon
