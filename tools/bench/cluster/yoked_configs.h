// Config files for the yoked children of the cluster benchmark: one local-journal daemon, or
// the instances of one JetStream installation (every instance's file carries the same
// [cluster.instances.*] tables and names itself in `instance`).
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "tools/bench/daemon/yoked_process.h"

namespace yoke::bench {

// What every daemon of a run shares, whatever its backend.
struct DaemonKnobs {
  std::string durability = "group";             // [journal] durability (local backend)
  std::uint64_t snapshot_after_events = 200000;  // [snapshots] after_events
};

struct InstancePlan {
  std::string name;
  YokedEndpoints endpoints;
  std::vector<std::string> owns, stands_by;
};

// One installation on a JetStream stream.
struct InstallationPlan {
  std::vector<std::string> servers;  // nats:// URLs
  std::string stream;  // also its subject prefix: streams of one NATS cluster never overlap
  std::int64_t max_bytes = std::int64_t{192} << 20;  // several streams share a node's 1 GB store
  int heartbeat_ms = 500;
  int takeover_ms = 3000;
  std::vector<InstancePlan> instances;
};

// A daemon on the local journal and snapshots in its data directory; logs JSON at info.
void write_local_config(const std::filesystem::path& file, const YokedEndpoints& endpoints,
                        const DaemonKnobs& knobs);

// Instance `instance` of `plan` (which must list it). Throws std::invalid_argument otherwise.
void write_instance_config(const std::filesystem::path& file, const InstallationPlan& plan,
                           const std::string& instance, const DaemonKnobs& knobs);

}  // namespace yoke::bench
