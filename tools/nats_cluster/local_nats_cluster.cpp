#include "local_nats_cluster.h"

#include <signal.h>
#include <stdlib.h>

#include <cstdlib>
#include <fstream>
#include <set>
#include <sstream>
#include <stdexcept>
#include <thread>

#include <nlohmann/json.hpp>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/stream_setup.h"
#include "tools/nats_cluster/free_ports.h"
#include "tools/nats_cluster/monitor_http.h"

namespace yoke::nats_cluster {
namespace {

constexpr auto poll_interval = std::chrono::milliseconds(50);
constexpr auto http_limit = std::chrono::milliseconds(1000);

std::filesystem::path make_temp_directory() {
  std::string pattern = (std::filesystem::temp_directory_path() / "yoke-nats-XXXXXX").string();
  if (::mkdtemp(pattern.data()) == nullptr) {
    throw std::runtime_error("cannot create a temporary directory for the NATS cluster");
  }
  return pattern;
}

// A node could not have its ports: the cluster starts again on fresh ones.
struct PortTaken : std::runtime_error {
  using std::runtime_error::runtime_error;
};

bool before(std::chrono::steady_clock::time_point deadline) {
  return std::chrono::steady_clock::now() < deadline;
}

}  // namespace

LocalNatsCluster::LocalNatsCluster(LocalClusterSettings settings)
    : settings_(std::move(settings)) {
  if (settings_.nodes < 1 || settings_.nodes > 9) {
    throw std::runtime_error("a local NATS cluster has 1 to 9 nodes");
  }
  directory_ = make_temp_directory();
  // A port another process took between the pick and the bind makes a node exit (or another
  // server answer on its monitoring port): start again on fresh ports, a few times.
  constexpr int attempts = 3;
  for (int attempt = 1;; ++attempt) {
    try {
      start_on_fresh_ports();
      wait_ready(settings_.start_limit);
      return;
    } catch (const PortTaken&) {
      stop_all();
      if (attempt < attempts) continue;
      std::error_code ignored;
      std::filesystem::remove_all(directory_, ignored);
      throw;
    } catch (...) {
      stop_all();
      std::error_code ignored;
      std::filesystem::remove_all(directory_, ignored);
      throw;
    }
  }
}

void LocalNatsCluster::start_on_fresh_ports() {
  const std::vector<int> free = free_loopback_ports(3 * settings_.nodes);
  ports_.clear();
  for (int node = 0; node < settings_.nodes; ++node) {
    const auto base = static_cast<std::size_t>(3 * node);
    ports_.push_back({free[base], free[base + 1], free[base + 2]});
  }
  for (int node = 0; node < settings_.nodes; ++node) {
    const std::filesystem::path data = directory_ / ("data-" + server_name(node));
    std::filesystem::remove_all(data);  // a previous attempt's
    std::ofstream(config_file(node))
        << node_config_text(settings_.cluster_name, ports_, static_cast<std::size_t>(node),
                            data);
  }
  nodes_.clear();
  nodes_.resize(ports_.size());
  paused_.assign(ports_.size(), false);
  for (int node = 0; node < settings_.nodes; ++node) start_node(node);
}

LocalNatsCluster::~LocalNatsCluster() {
  stop_all();
  // YOKE_KEEP_NATS_DIR=1 keeps configs, logs and data for a post-mortem.
  const char* keep = std::getenv("YOKE_KEEP_NATS_DIR");
  if (keep == nullptr || std::string(keep) != "1") {
    std::error_code ignored;
    std::filesystem::remove_all(directory_, ignored);
  }
}

std::vector<std::string> LocalNatsCluster::client_urls() const {
  std::vector<std::string> urls;
  for (int node = 0; node < size(); ++node) urls.push_back(client_url(node));
  return urls;
}

std::string LocalNatsCluster::client_url(int node) const {
  return "nats://127.0.0.1:" + std::to_string(ports(node).client);
}

std::string LocalNatsCluster::server_name(int node) const {
  // Appended, not "n" + to_string(...): GCC 12 warns falsely (-Wrestrict) on that once inlined.
  std::string name = "n";
  name += std::to_string(node + 1);
  return name;
}

int LocalNatsCluster::node_named(const std::string& name) const {
  for (int node = 0; node < size(); ++node) {
    if (server_name(node) == name) return node;
  }
  return -1;
}

bool LocalNatsCluster::running(int node) const {
  return nodes_.at(static_cast<std::size_t>(node)).running();
}

std::filesystem::path LocalNatsCluster::log_file(int node) const {
  return directory_ / (server_name(node) + ".log");
}

std::filesystem::path LocalNatsCluster::config_file(int node) const {
  return directory_ / (server_name(node) + ".conf");
}

void LocalNatsCluster::start_node(int node) {
  const auto index = static_cast<std::size_t>(node);
  nodes_[index] = ChildProcess({settings_.server_program, "-c", config_file(node).string()},
                               log_file(node));
  paused_[index] = false;
}

void LocalNatsCluster::kill(int node) {
  nodes_.at(static_cast<std::size_t>(node)).kill_now();
  paused_.at(static_cast<std::size_t>(node)) = false;
}

void LocalNatsCluster::pause(int node) {
  nodes_.at(static_cast<std::size_t>(node)).signal(SIGSTOP);
  paused_.at(static_cast<std::size_t>(node)) = true;
}

void LocalNatsCluster::resume(int node) {
  nodes_.at(static_cast<std::size_t>(node)).signal(SIGCONT);
  paused_.at(static_cast<std::size_t>(node)) = false;
}

void LocalNatsCluster::restart(int node, std::chrono::milliseconds limit) {
  if (running(node)) throw std::runtime_error(server_name(node) + " is still running");
  start_node(node);
  const auto deadline = std::chrono::steady_clock::now() + limit;
  if (!wait_healthy(node, limit)) {
    throw std::runtime_error(server_name(node) + " did not become healthy after a restart:\n" +
                             log_tail(node));
  }
  // A node healthy again can leave the cluster without a settled meta leader for seconds; the
  // caller's next stream would then time out being created.
  const std::string why_not = accepts_replicated_stream(deadline);
  if (!why_not.empty()) {
    throw std::runtime_error("the cluster accepted no replicated stream after " +
                             server_name(node) + " restarted: " + why_not);
  }
}

void LocalNatsCluster::stop_all() {
  // SIGTERM to all first, so the nodes shut down side by side.
  for (ChildProcess& process : nodes_) {
    process.signal(SIGCONT);
    process.signal(SIGTERM);
  }
  for (ChildProcess& process : nodes_) process.stop(std::chrono::milliseconds(3000));
  paused_.assign(paused_.size(), false);
}

bool LocalNatsCluster::wait_healthy(int node, std::chrono::milliseconds limit) const {
  const auto deadline = std::chrono::steady_clock::now() + limit;
  do {
    if (monitor_get(ports(node).http, "/healthz", http_limit).status == 200) return true;
    std::this_thread::sleep_for(poll_interval);
  } while (before(deadline));
  return false;
}

void LocalNatsCluster::wait_ready(std::chrono::milliseconds limit) {
  const auto deadline = std::chrono::steady_clock::now() + limit;
  const auto give_up = [&](const std::string& why) {
    std::string text = "the local NATS cluster in " + directory_.string() + " " + why;
    for (int node = 0; node < size(); ++node) {
      text += "\n--- " + server_name(node) + ".log (end) ---\n" + log_tail(node);
    }
    throw std::runtime_error(text);
  };
  for (int node = 0; node < size(); ++node) {
    for (;;) {
      if (nodes_[static_cast<std::size_t>(node)].exited()) {
        throw PortTaken(server_name(node) + " exited at start:\n" + log_tail(node));
      }
      const HttpReply health = monitor_get(ports(node).http, "/healthz", http_limit);
      if (health.status == 200) break;
      if (!before(deadline)) give_up("did not answer /healthz in time");
      std::this_thread::sleep_for(poll_interval);
    }
    // The answer must come from this node, not from a server that took its port.
    const HttpReply vars = monitor_get(ports(node).http, "/varz", http_limit);
    const nlohmann::json varz = nlohmann::json::parse(vars.body, nullptr, false);
    if (varz.is_discarded() || varz.value("port", 0) != ports(node).client) {
      throw PortTaken("another server answers on the monitoring port of " + server_name(node));
    }
  }
  // Healthy nodes can still lack a JetStream meta leader or peers.
  const std::string why_not = accepts_replicated_stream(deadline);
  if (!why_not.empty()) give_up("never accepted a replicated stream: " + why_not);
}

std::string LocalNatsCluster::accepts_replicated_stream(
    std::chrono::steady_clock::time_point deadline) const {
  // A replicated stream that can be created proves a meta leader and enough peers.
  cluster::ConnectionSettings connection_settings;
  connection_settings.servers = client_urls();
  connection_settings.name = "yoke-cluster-probe";
  connection_settings.api_timeout = std::chrono::milliseconds(2000);
  std::string last_error = "no time left to try";
  try {
    cluster::NatsConnection connection(connection_settings);
    cluster::StreamSettings probe;
    probe.name = "yoke_cluster_probe";
    probe.subjects = {"yoke.cluster.probe"};
    probe.replicas = size();
    probe.max_bytes = 1 << 20;
    while (before(deadline)) {
      try {
        cluster::ensure_stream(connection, probe);
        jsErrCode code = jsErrCode(0);
        js_DeleteStream(connection.jetstream(), probe.name.c_str(), nullptr, &code);
        return {};
      } catch (const cluster::ClusterError& error) {
        last_error = error.what();
      }
      std::this_thread::sleep_for(poll_interval);
    }
  } catch (const cluster::ClusterError& error) {
    last_error = error.what();
  }
  return last_error;
}

std::optional<NodeStreamView> LocalNatsCluster::stream_view(int node,
                                                            const std::string& stream) const {
  const HttpReply reply =
      monitor_get(ports(node).http, "/jsz?accounts=true&streams=true", http_limit);
  if (reply.status != 200) return std::nullopt;
  const nlohmann::json document = nlohmann::json::parse(reply.body, nullptr, false);
  if (document.is_discarded() || !document.contains("account_details")) return std::nullopt;
  for (const auto& account : document["account_details"]) {
    if (!account.contains("stream_detail")) continue;
    for (const auto& detail : account["stream_detail"]) {
      if (detail.value("name", "") != stream) continue;
      NodeStreamView view;
      const nlohmann::json state = detail.value("state", nlohmann::json::object());
      view.messages = state.value("messages", std::uint64_t{0});
      view.first_sequence = state.value("first_seq", std::uint64_t{0});
      view.last_sequence = state.value("last_seq", std::uint64_t{0});
      view.leader = detail.value("cluster", nlohmann::json::object()).value("leader", "");
      return view;
    }
  }
  return std::nullopt;
}

int LocalNatsCluster::stream_leader(const std::string& stream,
                                    std::chrono::milliseconds limit) const {
  const auto deadline = std::chrono::steady_clock::now() + limit;
  do {
    std::set<std::string> named;
    std::set<int> hosts;
    for (int node = 0; node < size(); ++node) {
      if (!running(node) || paused(node)) continue;
      const auto view = stream_view(node, stream);
      if (!view) continue;
      hosts.insert(node);
      named.insert(view->leader);
    }
    if (named.size() == 1 && !named.begin()->empty()) {
      const int leader = node_named(*named.begin());
      if (hosts.count(leader) != 0) return leader;
    }
    std::this_thread::sleep_for(poll_interval);
  } while (before(deadline));
  throw std::runtime_error("no agreed leader for stream '" + stream + "' in time");
}

std::string LocalNatsCluster::log_tail(int node, std::size_t bytes) const {
  std::ifstream file(log_file(node), std::ios::binary);
  std::stringstream buffer;
  buffer << file.rdbuf();
  const std::string text = buffer.str();
  return text.size() <= bytes ? text : text.substr(text.size() - bytes);
}

}  // namespace yoke::nats_cluster
