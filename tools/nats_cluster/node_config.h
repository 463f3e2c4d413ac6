// The configuration file of one node of a local test cluster.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

namespace yoke::nats_cluster {

struct NodePorts {
  int client = 0;   // NATS clients
  int cluster = 0;  // routes between the nodes
  int http = 0;     // monitoring: /healthz, /jsz
};

// nats-server configuration for node `index` (0-based; server_name "n<index+1>") of a cluster
// named `cluster_name` whose nodes listen on `ports` (all on 127.0.0.1), with JetStream data
// under `store_dir`.
std::string node_config_text(const std::string& cluster_name, const std::vector<NodePorts>& ports,
                             std::size_t index, const std::filesystem::path& store_dir);

}  // namespace yoke::nats_cluster
