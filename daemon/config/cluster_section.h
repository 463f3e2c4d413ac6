// The [cluster] section: reading it from the config file (each key's type, range and form,
// with the file and line) and checking it as a whole (owners, standbys, this instance).
#pragma once

#include <optional>
#include <string>
#include <string_view>

#include "daemon_config.h"
#include "toml_table_reader.h"

namespace yoke::daemon {

// Reads [cluster] and its [cluster.instances.NAME] tables over `out`. Throws ConfigError
// naming the file, line and key.
void read_cluster(TomlTableReader& table, ClusterSettings& out);

// Throws ConfigError for: instances given with backend local; with backend jetstream no
// servers, no instance or no table for it; a pool owned twice; a standby for a pool no
// instance owns or that the instance owns itself; a pool under [pools] that no instance owns;
// takeover not above 2 x heartbeat; a malformed or "*" advertised endpoint; an invalid pool
// name in owns or stands_by.
// O(instances x pools).
void validate_cluster(const DaemonConfig& config);

// Why `text` cannot be an advertised endpoint (tcp://HOST:PORT with a host clients can reach,
// or ipc://PATH), or nothing when it can.
std::optional<std::string> advertised_endpoint_problem(std::string_view text);

}  // namespace yoke::daemon
