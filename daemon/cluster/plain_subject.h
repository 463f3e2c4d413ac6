// Core NATS messages, not stored by any stream: what daemons say to each other while they run
// (heartbeats), where a lost message only matters until the next one.
#pragma once

#include <chrono>
#include <optional>
#include <string>
#include <string_view>

#include "daemon/cluster/log_message.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/nats_handles.h"

namespace yoke::cluster {

// Queues one message for `subject` and returns: libnats' flusher thread sends it (no
// acknowledgement; it is lost while the connection is reconnecting). O(bytes). Throws
// ClusterError when the connection is closed or the subject is invalid.
void publish_plain(NatsConnection& connection, const std::string& subject, std::string_view data);

// Waits until every message queued on the connection reached the server, at most `timeout`.
// Returns false on a timeout or a closed connection. For a last word before closing.
bool flush_plain(NatsConnection& connection, std::chrono::milliseconds timeout);

// A subscription read by polling from the caller's thread: no callback runs in the caller's
// code, so a single-threaded loop needs no locks. libnats' reader thread queues deliveries
// (up to its pending limits; beyond them it drops messages and reports a slow consumer).
class PlainSubscription {
 public:
  // Subscribes to `subject` (wildcards allowed): one protocol line to the server, no wait.
  // Throws ClusterError.
  PlainSubscription(NatsConnection& connection, const std::string& subject);

  // The next queued message (subject and data), or nullopt when none is queued. Never blocks.
  std::optional<LogMessage> poll();

 private:
  SubscriptionHandle subscription_;
};

}  // namespace yoke::cluster
