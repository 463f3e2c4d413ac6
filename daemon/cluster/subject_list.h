// Which subjects of a stream hold messages: e.g. one subject per stored snapshot.
#pragma once

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

// Every subject of `stream` matching `filter` that holds messages, with how many, in no
// particular order. One stream-info request with a subjects filter (answered by the leader),
// at most the connection's api_timeout; the answer grows with the subjects listed. Throws
// ClusterError (not_found: no such stream).
std::vector<std::pair<std::string, std::uint64_t>> subjects_with_messages(
    NatsConnection& connection, const std::string& stream, const std::string& filter);

}  // namespace yoke::cluster
