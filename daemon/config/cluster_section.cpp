#include "cluster_section.h"

#include <map>
#include <set>

#include "config_error.h"
#include "daemon/pools/pool_names.h"
#include "endpoint_address.h"

namespace yoke::daemon {
namespace {

constexpr std::size_t kMaxClusterNameBytes = 64;

bool name_character(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '-' ||
         c == '_';
}

// Stream and instance names become one NATS subject token (and the stream a file name on
// the servers), so they keep to letters, digits, '-' and '_'.
std::optional<std::string> plain_name_problem(std::string_view name) {
  if (name.empty()) return "is empty";
  if (name.size() > kMaxClusterNameBytes) {
    return "is longer than " + std::to_string(kMaxClusterNameBytes) + " bytes";
  }
  for (const char c : name) {
    if (!name_character(c)) return "may hold only ASCII letters, digits, '-' and '_'";
  }
  return std::nullopt;
}

// A subject prefix: plain names joined by '.'.
std::optional<std::string> prefix_problem(std::string_view prefix) {
  if (prefix.empty() || prefix.size() > kMaxClusterNameBytes) {
    return "must have 1 to " + std::to_string(kMaxClusterNameBytes) + " bytes";
  }
  std::size_t start = 0;
  while (true) {
    const std::size_t dot = prefix.find('.', start);
    const std::string_view token = prefix.substr(start, dot == std::string_view::npos
                                                            ? std::string_view::npos
                                                            : dot - start);
    if (plain_name_problem(token)) {
      return "must be subject tokens of ASCII letters, digits, '-' and '_' joined by '.'";
    }
    if (dot == std::string_view::npos) return std::nullopt;
    start = dot + 1;
  }
}

void read_backend(TomlTableReader& table, ClusterSettings& out) {
  const auto value = table.read_string("backend");
  if (!value) return;
  if (*value == "local") {
    out.backend = StorageBackend::local;
  } else if (*value == "jetstream") {
    out.backend = StorageBackend::jetstream;
  } else {
    table.fail("backend", "is '" + *value + "', not one of local, jetstream");
  }
}

void read_milliseconds(TomlTableReader& table, std::string_view key, std::int64_t min,
                       std::int64_t max, std::chrono::milliseconds& out) {
  std::int64_t value = out.count();
  table.read(key, min, max, value);
  out = std::chrono::milliseconds(value);
}

std::vector<std::string> read_pool_list(TomlTableReader& table, std::string_view key) {
  std::vector<std::string> pools = table.read_string_list(key).value_or(std::vector<std::string>{});
  for (std::size_t i = 0; i < pools.size(); ++i) {
    auto problem = pools[i].empty() ? std::optional<std::string>("a pool name is not empty")
                                    : pool_name_problem(pools[i]);
    if (problem) {
      table.fail(key, "item " + std::to_string(i + 1) + " ('" + pools[i] + "') is not a pool " +
                          "name: " + *problem);
    }
  }
  return pools;
}

InstanceSettings read_instance(TomlTableReader& table) {
  InstanceSettings out;
  const auto endpoint = [&table](std::string_view key, std::string& value) {
    auto text = table.read_string(key);
    if (!text) {
      table.fail("", "has no '" + std::string(key) +
                         "': every instance advertises its ingest, query and publish endpoints");
    }
    if (auto problem = advertised_endpoint_problem(*text)) table.fail(key, *problem);
    value = std::move(*text);
  };
  endpoint("ingest", out.ingest);
  endpoint("query", out.query);
  endpoint("publish", out.publish);
  out.owns = read_pool_list(table, "owns");
  out.stands_by = read_pool_list(table, "stands_by");
  table.finish();
  return out;
}

}  // namespace

std::optional<std::string> advertised_endpoint_problem(std::string_view text) {
  const auto address = parse_zmq_endpoint(text);
  if (!address) return "is '" + std::string(text) + "', not tcp://HOST:PORT or ipc://PATH";
  if (address->kind == BindAddress::Kind::tcp &&
      (address->host == "*" || address->host == "0.0.0.0" || address->host == "[::]")) {
    return "is '" + std::string(text) +
           "': an advertised endpoint names a host clients can reach, not every interface";
  }
  return std::nullopt;
}

void read_cluster(TomlTableReader& table, ClusterSettings& out) {
  read_backend(table, out);
  if (auto servers = table.read_string_list("servers")) {
    for (std::size_t i = 0; i < servers->size(); ++i) {
      const std::string& url = (*servers)[i];
      if (url.empty() || url.find_first_of(", \t\r\n") != std::string::npos) {
        table.fail("servers", "item " + std::to_string(i + 1) + " ('" + url +
                                  "') is not a server URL (nats://HOST:PORT)");
      }
    }
    out.servers = std::move(*servers);
  }
  if (auto stream = table.read_string("stream")) {
    if (auto problem = plain_name_problem(*stream)) table.fail("stream", *problem);
    out.stream = std::move(*stream);
  }
  if (auto prefix = table.read_string("subject_prefix")) {
    if (auto problem = prefix_problem(*prefix)) table.fail("subject_prefix", *problem);
    out.subject_prefix = std::move(*prefix);
  }
  std::int64_t replicas = out.replicas;
  table.read("replicas", std::int64_t{1}, std::int64_t{5}, replicas);
  out.replicas = static_cast<int>(replicas);
  table.read("max_bytes", std::int64_t{1} << 20, std::int64_t{1} << 50, out.max_bytes);
  if (auto instance = table.read_string("instance")) {
    if (auto problem = plain_name_problem(*instance); problem && !instance->empty()) {
      table.fail("instance", *problem);
    }
    out.instance = std::move(*instance);
  }
  read_milliseconds(table, "heartbeat_ms", 50, 60'000, out.heartbeat);
  read_milliseconds(table, "takeover_ms", 1, 600'000, out.takeover);
  read_milliseconds(table, "publish_timeout_ms", 100, 600'000, out.publish_timeout);
  if (auto instances = table.read_table("instances")) {
    for (auto& [name, instance_table] : instances->read_named_tables()) {
      if (auto problem = plain_name_problem(name)) {
        instance_table.fail("", "is not an instance name: it " + *problem);
      }
      out.instances[name] = read_instance(instance_table);
    }
    instances->finish();
  }
  table.finish();
}

void validate_cluster(const DaemonConfig& config) {
  const ClusterSettings& cluster = config.cluster;
  const auto fail = [](const std::string& message) { throw ConfigError(message); };
  if (cluster.takeover <= 2 * cluster.heartbeat) {
    fail("cluster.takeover_ms (" + std::to_string(cluster.takeover.count()) +
         ") must exceed 2 x cluster.heartbeat_ms (" + std::to_string(cluster.heartbeat.count()) +
         "): a standby must not claim a pool whose owner missed one beat");
  }
  if (cluster.backend == StorageBackend::local) {
    if (!cluster.instances.empty()) {
      fail("cluster.instances is given but cluster.backend is \"local\": instances share a log "
           "only with backend \"jetstream\"");
    }
    return;
  }
  if (cluster.servers.empty()) {
    fail("cluster.servers is empty: backend \"jetstream\" needs the NATS servers to connect to");
  }
  if (cluster.instance.empty()) {
    fail("cluster.instance is not set: backend \"jetstream\" needs this daemon's name (one of "
         "the [cluster.instances.NAME] tables)");
  }
  if (!cluster.instances.contains(cluster.instance)) {
    fail("cluster.instance is '" + cluster.instance + "', but there is no [cluster.instances." +
         cluster.instance + "] table");
  }

  std::map<std::string, std::string> owners;  // pool -> the instance owning it
  for (const auto& [name, instance] : cluster.instances) {
    const std::string table = "cluster.instances." + name;
    for (const auto& [key, endpoint] : {std::pair{"ingest", &instance.ingest},
                                        std::pair{"query", &instance.query},
                                        std::pair{"publish", &instance.publish}}) {
      if (auto problem = advertised_endpoint_problem(*endpoint)) {
        fail(table + "." + key + " " + *problem);
      }
    }
    for (const auto& [list, pools] : {std::pair{"owns", &instance.owns},
                                      std::pair{"stands_by", &instance.stands_by}}) {
      for (const std::string& pool : *pools) {
        if (auto problem = pool.empty() ? std::optional<std::string>("a pool name is not empty")
                                        : pool_name_problem(pool)) {
          fail(table + "." + list + " holds '" + pool + "', not a pool name: " + *problem);
        }
      }
    }
    for (const std::string& pool : instance.owns) {
      const auto [it, added] = owners.emplace(pool, name);
      if (!added) {
        fail(it->second == name ? "pool " + pool + " is listed twice in " + table + ".owns"
                                : "pool " + pool + " is owned by both " + it->second + " and " +
                                      name);
      }
    }
  }
  for (const auto& [name, instance] : cluster.instances) {
    std::set<std::string> seen;
    for (const std::string& pool : instance.stands_by) {
      const auto owner = owners.find(pool);
      if (owner == owners.end()) {
        fail("unknown pool " + pool + " in cluster.instances." + name +
             ".stands_by: no instance owns it");
      }
      if (owner->second == name) {
        fail("cluster.instances." + name + " stands by for pool " + pool +
             ", which it owns itself");
      }
      if (!seen.insert(pool).second) {
        fail("pool " + pool + " is listed twice in cluster.instances." + name + ".stands_by");
      }
    }
  }
  for (const auto& [pool, settings] : config.pools) {
    if (!owners.contains(pool)) {
      fail("pools." + pool + " is declared, but no instance in cluster.instances owns it");
    }
  }
}

}  // namespace yoke::daemon
