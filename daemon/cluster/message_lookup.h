// Single-message reads: the last message of a subject and the message at a sequence, answered
// by the stream leader (so they include every acknowledged publish), and direct reads that any
// replica may answer.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "daemon/cluster/log_message.h"
#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

// The newest message of `subject` in `stream` (its sequence is the subject's last sequence),
// or nullopt when the subject has none. Answered by the stream leader, so it includes every
// acknowledged publish. One API round trip, at most the connection's api_timeout. Throws
// ClusterError (not_found: no such stream; timeout, no_responders during an election).
std::optional<LogMessage> last_message(NatsConnection& connection, const std::string& stream,
                                       const std::string& subject);

// The message at `sequence` in `stream`, as the stream leader stores it; nullopt when there is
// none (never written, or purged). One API round trip, at most the connection's api_timeout.
// Throws ClusterError (not_found: no such stream).
std::optional<LogMessage> message_at(NatsConnection& connection, const std::string& stream,
                                     std::uint64_t sequence);

// The message at `sequence` as the first replica that answers a direct read stores it (streams
// with allow_direct): cheaper for the leader, but a follower's copy may lag, so a message
// acknowledged a moment ago can be missing (nullopt, as for a sequence never written or
// purged). Which replica answers is the cluster's choice, not the connection's. Server
// headers are dropped. One round trip, at most the connection's api_timeout. Throws
// ClusterError.
std::optional<LogMessage> read_replica_message(NatsConnection& connection,
                                               const std::string& stream,
                                               std::uint64_t sequence);

}  // namespace yoke::cluster
