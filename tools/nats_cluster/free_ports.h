// Loopback TCP ports that are free now, for servers a test is about to start.
#pragma once

#include <vector>

namespace yoke::nats_cluster {

// `count` distinct ports the kernel handed out for 127.0.0.1 (all held open until every one is
// picked, so none repeats; they are free again when this returns, and another process could
// still take one before the caller binds it). Throws std::runtime_error.
std::vector<int> free_loopback_ports(int count);

}  // namespace yoke::nats_cluster
