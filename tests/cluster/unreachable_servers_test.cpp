// No server reachable: a clear error, quickly, naming every server tried.
#include <gtest/gtest.h>

#include <chrono>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/nats_connection.h"
#include "tools/nats_cluster/free_ports.h"

namespace yoke::cluster {
namespace {

TEST(UnreachableServers, ConnectingFailsFastAndNamesEveryServer) {
  ConnectionSettings settings;
  for (const int port : nats_cluster::free_loopback_ports(3)) {
    settings.servers.push_back("nats://127.0.0.1:" + std::to_string(port));
  }
  const auto started = std::chrono::steady_clock::now();
  try {
    NatsConnection connection(settings);
    FAIL() << "connected to closed ports";
  } catch (const ClusterError& error) {
    const double seconds =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
    EXPECT_EQ(error.kind(), ClusterErrorKind::unreachable);
    const std::string text = error.what();
    for (const std::string& server : settings.servers) {
      EXPECT_NE(text.find(server), std::string::npos) << text;
    }
    EXPECT_NE(text.find("no NATS server reachable"), std::string::npos) << text;
    EXPECT_LT(seconds, 2.0) << "refused ports should fail at once";
  }
}

TEST(UnreachableServers, AnEmptyServerListIsInvalid) {
  try {
    NatsConnection connection(ConnectionSettings{});
    FAIL() << "connected to nothing";
  } catch (const ClusterError& error) {
    EXPECT_EQ(error.kind(), ClusterErrorKind::invalid);
  }
}

}  // namespace
}  // namespace yoke::cluster
