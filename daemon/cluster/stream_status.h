// What a stream holds now and who leads it, from the JetStream API (answered by the leader).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

struct StreamReplica {
  std::string server;  // the server_name of a follower
  bool current = false;  // caught up with the leader
};

struct StreamStatus {
  std::string name;
  std::vector<std::string> subjects;
  std::int64_t replicas = 0;
  std::int64_t max_bytes = -1;
  std::uint64_t messages = 0;
  std::uint64_t bytes = 0;
  std::uint64_t first_sequence = 0;  // 0 with no messages
  std::uint64_t last_sequence = 0;   // the last sequence ever assigned (kept across purges)
  std::string leader;                // server_name of the leader; "" on a single server
  std::vector<StreamReplica> followers;
};

// One stream-info request (blocks for a round trip, at most the connection's api_timeout).
// Throws ClusterError(not_found) when there is no such stream, other kinds as they come.
StreamStatus stream_status(NatsConnection& connection, const std::string& stream);

}  // namespace yoke::cluster
