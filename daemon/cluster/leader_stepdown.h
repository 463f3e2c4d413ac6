// Asking a stream's leader to step down, so that another replica is elected (a graceful
// handover before maintenance; the tests use it to have each node serve reads in turn).
#pragma once

#include <string>

#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

// Sends $JS.API.STREAM.LEADER.STEPDOWN.<stream>. Returns when the leader has agreed; the
// election that follows takes a few hundred milliseconds on loopback, during which publishes
// find no responders. Which replica wins is the cluster's choice. One round trip, at most the
// connection's api_timeout. Throws ClusterError (not_found, rejected, timeout).
void step_down_leader(NatsConnection& connection, const std::string& stream);

}  // namespace yoke::cluster
