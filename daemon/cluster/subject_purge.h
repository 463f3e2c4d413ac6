// Dropping the old part of one subject (e.g. a pool's entries below its newest snapshot).
#pragma once

#include <cstdint>
#include <string>

#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

// Removes every message of `subject` (a plain subject or a filter) in `stream` whose sequence
// is below `below_sequence`; other subjects and later messages stay, and sequences are never
// reused. One API round trip (at most the connection's
// api_timeout), replicated like a publish. Throws ClusterError (not_found: no such stream).
void purge_subject_below(NatsConnection& connection, const std::string& stream,
                         const std::string& subject, std::uint64_t below_sequence);

// Removes every message of `stream` below `below_sequence`, whatever its subject. Past the
// stream's last sequence this moves the stream forward: it stays empty and its next message
// gets `below_sequence`. On a replicated stream of nats-server 2.9.10 the first publish after
// such a move is refused once ("expected sequence does not match store", JetStream error
// 10077; not stored) while the leader catches up; the next is stored. One API round trip,
// replicated like a publish. Throws ClusterError (not_found: no such stream).
void purge_stream_below(NatsConnection& connection, const std::string& stream,
                        std::uint64_t below_sequence);

}  // namespace yoke::cluster
