// Loopback TCP ports that are free now, for servers a test is about to start.
#pragma once

#include <vector>

namespace yoke::nats_cluster {

// `count` distinct ports of 127.0.0.1 that could be bound just now, drawn at random from
// 20000-32767: below Linux's ephemeral range (32768-60999), so the outgoing connections of
// running servers (routes, clients), which take ephemeral ports, cannot grab one between this
// call and the server's bind. Another test picking at the same moment rarely draws the same
// port; the cluster retries with fresh ports if a node fails to start. Throws
// std::runtime_error when no free ports are found.
std::vector<int> free_loopback_ports(int count);

}  // namespace yoke::nats_cluster
