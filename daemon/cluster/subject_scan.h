// Finding where a subject's messages start: the first stored message of a subject or filter at
// or after a sequence, without reading the messages in between.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

// The stream sequence of the first message in `stream` at or after `from` (>= 1) whose subject
// matches `filter` (a subject, or a filter with wildcards such as "yoke.ev.>"), or nullopt
// when there is none. Answered by the stream leader (the JetStream API's message get with
// next_by_subj, which libnats 3.4 does not wrap), so it includes every acknowledged publish.
// One API round trip, at most the connection's api_timeout. Throws ClusterError (not_found: no
// such stream; timeout, no_responders during an election; other for an answer it cannot read).
std::optional<std::uint64_t> first_sequence_from(NatsConnection& connection,
                                                 const std::string& stream,
                                                 const std::string& filter, std::uint64_t from);

}  // namespace yoke::cluster
