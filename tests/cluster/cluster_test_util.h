// Shared helpers of the cluster tests: connections, stream settings, reading a log to its end.
#pragma once

#include <chrono>
#include <string>
#include <vector>

#include "daemon/cluster/log_message.h"
#include "daemon/cluster/log_reader.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/stream_setup.h"

namespace yoke::cluster::testing {

inline ConnectionSettings connection_to(std::vector<std::string> servers) {
  ConnectionSettings settings;
  settings.servers = std::move(servers);
  settings.name = "yoke-cluster-tests";
  return settings;
}

inline StreamSettings log_stream(const std::string& name, std::vector<std::string> subjects,
                                 int replicas = 3) {
  StreamSettings settings;
  settings.name = name;
  settings.subjects = std::move(subjects);
  settings.replicas = replicas;
  settings.max_bytes = 64 << 20;
  return settings;
}

// Every message of `filter` from `start` until the reader reports none pending (or nothing
// arrives for `quiet`).
inline std::vector<LogMessage> read_to_end(NatsConnection& connection, const std::string& stream,
                                           const std::string& filter, std::uint64_t start = 1,
                                           std::chrono::milliseconds quiet =
                                               std::chrono::milliseconds(3000)) {
  LogReader reader(connection, {stream, filter, start});
  std::vector<LogMessage> messages;
  while (auto message = reader.next(quiet)) {
    const bool last = message->pending == 0;
    messages.push_back(std::move(*message));
    if (last) break;
  }
  return messages;
}

}  // namespace yoke::cluster::testing
