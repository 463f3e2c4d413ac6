// A big ingest message's envelope read without its events: what the loop needs to decide that a
// new pool's first batch may be decoded (and checked) on a worker instead (PoolService::offer).
// Not a contract: the same bytes are decoded by decode_ingest (batch_decoder.h) all the same.
// The promise: when this reads a batch and decode_ingest accepts the message, both name the
// same pool, client id and batch number (Protobuf's rules: the last value of a field wins, a
// batch given twice is merged, a retirement after it replaces it). Anything it is unsure of
// (groups, over-long varints, a version past 32 bits) gives nothing, and the loop decodes the
// message as before. Never throws; reads only inside `message` (the fuzz target's path).
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace yoke::daemon {

struct BatchEnvelope {
  std::string pool;  // as sent: not yet resolved (resolve_pool_name)
  std::string client_id;
  std::uint64_t client_batch = 0;
};

// The envelope of a yoke.v1.IngestRequest of version 1 carrying a batch; nothing for any other
// message, or one it cannot read. O(fields of the message): each event is skipped in O(1).
std::optional<BatchEnvelope> read_batch_envelope(std::string_view message);

}  // namespace yoke::daemon
