#include "node_config.h"

namespace yoke::nats_cluster {

std::string node_config_text(const std::string& cluster_name, const std::vector<NodePorts>& ports,
                             std::size_t index, const std::filesystem::path& store_dir) {
  const auto address = [](int port) { return "127.0.0.1:" + std::to_string(port); };
  const NodePorts& own = ports.at(index);
  std::string routes;
  for (const NodePorts& node : ports) {
    routes += (routes.empty() ? "" : ", ") + std::string("nats-route://") + address(node.cluster);
  }
  std::string text;
  text += "server_name: n" + std::to_string(index + 1) + "\n";
  text += "listen: " + address(own.client) + "\n";
  text += "http: " + address(own.http) + "\n";
  // 2GB: a stream of the default cap (1 GiB) fits beside what the readiness probe may still
  // reserve for a moment after its deletion (with 1GB, a stream made just after readiness was
  // sometimes refused: "insufficient storage"), as in the Python twin.
  text += "jetstream {\n  store_dir: \"" + store_dir.string() +
          "\"\n  max_memory_store: 256MB\n  max_file_store: 2GB\n}\n";
  if (ports.size() > 1) {
    text += "cluster {\n  name: " + cluster_name + "\n  listen: " + address(own.cluster) +
            "\n  routes: [ " + routes + " ]\n}\n";
  }
  return text;
}

}  // namespace yoke::nats_cluster
