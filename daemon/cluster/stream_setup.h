// Creating the log's stream: an append-only, replicated, file-backed stream that refuses new
// messages when full instead of dropping old ones.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/stream_status.h"

namespace yoke::cluster {

struct StreamSettings {
  std::string name;                   // letters, digits, '-' and '_'
  std::vector<std::string> subjects;  // e.g. {"yoke.ev.>"}; at least one
  int replicas = 3;                   // 1..5; R3 survives the loss of any one server
  std::int64_t max_bytes = 0;         // the cap (> 0): when reached, publishes are refused
  std::int32_t max_message_bytes = -1;  // -1: the server's max_payload (1 MiB by default)
  // Lets every replica answer direct reads (read_replica_message): reads of one server's copy.
  bool allow_direct = true;
};

// Makes sure the stream exists with these settings: limits retention, file storage, DiscardNew
// at max_bytes, DenyDelete (no single message can be removed; purging a subject below a
// sequence stays allowed), no age limit. Creating an identical stream again is a no-op.
// Returns once the stream has a leader (a new R3 stream elects one, well under a second on a
// healthy cluster), so a publish right after it finds the stream. Blocks for a few API round
// trips, at most about three times the connection's api_timeout.
// Throws ClusterError: invalid (bad settings, before any request), mismatch (a stream of that
// name exists with other settings; the message lists them; nothing is changed), and the
// server's refusals (e.g. rejected with code 10005 when fewer servers than replicas are up),
// timeout (no leader within api_timeout).
StreamStatus ensure_stream(NatsConnection& connection, const StreamSettings& settings);

}  // namespace yoke::cluster
