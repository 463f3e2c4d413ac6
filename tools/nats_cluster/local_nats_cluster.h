// A NATS cluster on this machine for tests and benchmarks: `nodes` nats-server processes
// (3 by default) with client, route and monitoring ports picked free on 127.0.0.1, JetStream
// data in a fresh temporary directory, started as children of this process and known by PID.
// The constructor returns once the cluster has formed and JetStream works (every node's
// /healthz answers 200 and an R<nodes> stream can be created). Nodes can be killed, paused,
// resumed and restarted one at a time. The destructor stops every node by its PID and removes
// the directory, on every path out of a test (a failed assertion, an exception); a crash of the
// test process kills the nodes too (PR_SET_PDEATHSIG). Nothing else is ever signalled.
//
// Blocking: every call blocks the calling thread (the waits poll every 50 ms). Not thread
// safe: drive it from the test's main thread.
#pragma once

#include <sys/types.h>

#include <chrono>
#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "tools/nats_cluster/child_process.h"
#include "tools/nats_cluster/node_config.h"

namespace yoke::nats_cluster {

struct LocalClusterSettings {
  int nodes = 3;
  std::string server_program = "nats-server";  // looked up in PATH
  std::string cluster_name = "yoke-test";
  std::chrono::milliseconds start_limit{30000};  // to form and have JetStream ready
};

// One node's own view of a stream, from its /jsz (its replica, which may lag the leader).
struct NodeStreamView {
  std::uint64_t messages = 0;
  std::uint64_t first_sequence = 0;
  std::uint64_t last_sequence = 0;
  std::string leader;  // as this node believes
};

class LocalNatsCluster {
 public:
  // Starts the nodes and waits until the cluster is ready (see above), at most start_limit;
  // starts again on fresh ports (up to 3 times) when a node loses a port to another process.
  // Throws std::runtime_error with the tail of the node logs when it does not become ready.
  explicit LocalNatsCluster(LocalClusterSettings settings = {});
  ~LocalNatsCluster();
  LocalNatsCluster(const LocalNatsCluster&) = delete;
  LocalNatsCluster& operator=(const LocalNatsCluster&) = delete;

  int size() const { return static_cast<int>(ports_.size()); }
  // nats://127.0.0.1:PORT of every node, in node order, and of one node.
  std::vector<std::string> client_urls() const;
  std::string client_url(int node) const;
  // The node's server_name ("n1", "n2", ...) and its index by that name (-1 if unknown).
  std::string server_name(int node) const;
  int node_named(const std::string& name) const;
  const NodePorts& ports(int node) const { return ports_.at(static_cast<std::size_t>(node)); }
  pid_t pid(int node) const { return nodes_.at(static_cast<std::size_t>(node)).pid(); }
  bool running(int node) const;
  bool paused(int node) const { return paused_.at(static_cast<std::size_t>(node)); }
  const std::filesystem::path& directory() const { return directory_; }

  // SIGKILL by PID and reap (the node's data stays for a restart).
  void kill(int node);
  // SIGSTOP / SIGCONT by PID: the process stays, frozen, its sockets open.
  void pause(int node);
  void resume(int node);
  // Starts a killed node again with the same ports, configuration and data, and waits until
  // its /healthz answers 200 (it has caught up with its streams) and the cluster accepts a new
  // replicated stream, at most `limit` in all.
  void restart(int node, std::chrono::milliseconds limit = std::chrono::milliseconds(30000));
  // SIGTERM (then SIGKILL after a grace period) for every node still running; idempotent.
  void stop_all();

  // Waits until `node` answers /healthz with 200; false after `limit`.
  bool wait_healthy(int node, std::chrono::milliseconds limit) const;
  // This node's /jsz view of `stream`; nullopt when it does not answer or hosts no replica.
  std::optional<NodeStreamView> stream_view(int node, const std::string& stream) const;
  // The node that leads `stream`: waits until every running, unpaused node that hosts the
  // stream names the same leader and that leader is one of them. Throws std::runtime_error
  // after `limit`.
  int stream_leader(const std::string& stream, std::chrono::milliseconds limit) const;

  // The last `bytes` of a node's log file, for failure messages.
  std::string log_tail(int node, std::size_t bytes = 2000) const;

 private:
  void start_on_fresh_ports();
  void start_node(int node);
  void wait_ready(std::chrono::milliseconds limit);
  // Creates and deletes a stream replicated on every node until that works; the last error,
  // or "" once it worked, by `deadline`.
  std::string accepts_replicated_stream(std::chrono::steady_clock::time_point deadline) const;
  std::filesystem::path log_file(int node) const;
  std::filesystem::path config_file(int node) const;

  LocalClusterSettings settings_;
  std::filesystem::path directory_;
  std::vector<NodePorts> ports_;
  std::vector<ChildProcess> nodes_;
  std::vector<bool> paused_;
};

}  // namespace yoke::nats_cluster
