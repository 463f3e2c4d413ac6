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

}  // namespace yoke::cluster
