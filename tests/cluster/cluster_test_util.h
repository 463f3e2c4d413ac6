// Shared helpers of the cluster tests: connections, stream settings, reading a log to its end.
#pragma once

#include <gtest/gtest.h>

#include <chrono>
#include <exception>
#include <memory>
#include <string>
#include <vector>

#include "daemon/cluster/log_message.h"
#include "daemon/cluster/log_reader.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/stream_setup.h"
#include "daemon/cluster/subject_scan.h"
#include "tools/nats_cluster/local_nats_cluster.h"

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

// A test suite sharing one local cluster and one connection to it: started before the suite's
// first test, stopped after its last. `Suite` is the derived fixture, so each suite has its own.
template <typename Suite>
class OneClusterPerSuite : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    cluster_ = std::make_unique<nats_cluster::LocalNatsCluster>();
    connection_ = std::make_unique<NatsConnection>(connection_to(cluster_->client_urls()));
  }
  static void TearDownTestSuite() {
    connection_.reset();
    cluster_.reset();
  }
  static inline std::unique_ptr<nats_cluster::LocalNatsCluster> cluster_;
  static inline std::unique_ptr<NatsConnection> connection_;
};

// Restarts a killed node when the scope ends, however the test leaves it (so the suite's next
// tests find the whole cluster). A failed restart fails the test (ADD_FAILURE); it is never
// thrown out of the destructor, which would end the whole test binary.
class RestartWhenDone {
 public:
  RestartWhenDone(nats_cluster::LocalNatsCluster& cluster, int node)
      : cluster_(cluster), node_(node) {}
  RestartWhenDone(const RestartWhenDone&) = delete;
  RestartWhenDone& operator=(const RestartWhenDone&) = delete;
  ~RestartWhenDone() {
    try {
      cluster_.restart(node_);
    } catch (const std::exception& error) {
      ADD_FAILURE() << "restarting node " << node_ << " failed: " << error.what();
    }
  }

 private:
  nats_cluster::LocalNatsCluster& cluster_;
  int node_;
};

// Every message of `filter` from `start` until the reader reports none pending and the stream
// leader stores none after it (or nothing arrives for `quiet`). The pending count alone can read
// 0 one message early on a loaded machine, as the daemon's group reader knows too
// (JetStreamGroupReader::more_stored_after).
inline std::vector<LogMessage> read_to_end(NatsConnection& connection, const std::string& stream,
                                           const std::string& filter, std::uint64_t start = 1,
                                           std::chrono::milliseconds quiet =
                                               std::chrono::milliseconds(3000)) {
  LogReader reader(connection, {stream, filter, start});
  std::vector<LogMessage> messages;
  while (auto message = reader.next(quiet)) {
    const bool last = message->pending == 0 &&
                      !first_sequence_from(connection, stream, filter, message->sequence + 1);
    messages.push_back(std::move(*message));
    if (last) break;
  }
  return messages;
}

}  // namespace yoke::cluster::testing
