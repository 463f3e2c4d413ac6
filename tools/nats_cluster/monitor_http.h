// A plain HTTP GET to a nats-server's monitoring port on loopback (/healthz, /jsz).
#pragma once

#include <chrono>
#include <string>

namespace yoke::nats_cluster {

struct HttpReply {
  int status = 0;  // 0 when nothing answered (refused, timed out, cut off)
  std::string body;
};

// GET http://127.0.0.1:`port``path` with HTTP/1.0 (the server closes after the reply). Blocks
// at most about `limit`; never throws.
HttpReply monitor_get(int port, const std::string& path, std::chrono::milliseconds limit);

}  // namespace yoke::nats_cluster
