#include "config_validate.h"

#include <string>
#include <utility>
#include <vector>

#include "cluster_section.h"
#include "config_error.h"
#include "endpoint_address.h"

namespace yoke::daemon {
namespace {

void check_endpoints(const Endpoints& endpoints) {
  std::vector<std::pair<std::string, BindAddress>> bound;
  const auto add = [&](const char* key, const std::string& text, bool zmq) {
    const auto address = zmq ? parse_zmq_endpoint(text) : parse_host_port(text);
    if (!address) {
      throw ConfigError(std::string("endpoints.") + key + " is '" + text + "', not " +
                        (zmq ? "tcp://HOST:PORT or ipc://PATH" : "HOST:PORT"));
    }
    for (const auto& [other_key, other] : bound) {
      if (addresses_collide(*address, other)) {
        throw ConfigError(std::string("endpoints.") + key + " and endpoints." + other_key +
                          " bind the same address (" + text + ")");
      }
    }
    bound.emplace_back(key, *address);
  };
  add("ingest", endpoints.ingest, true);
  add("publish", endpoints.publish, true);
  add("query", endpoints.query, true);
  add("metrics", endpoints.metrics, false);
}

void check_pools(const DaemonConfig& config) {
  // Declared pools are reserved against the cap (PoolRegistry::may_create): they must fit.
  if (config.pools.size() > config.limits.max_pools) {
    throw ConfigError("the config declares " + std::to_string(config.pools.size()) +
                      " pools but limits.max_pools is " +
                      std::to_string(config.limits.max_pools) +
                      ": every declared pool has a slot reserved");
  }
  try {
    check_pool_settings(config.pool_defaults);
  } catch (const InputError& error) {
    throw ConfigError(std::string("pool_defaults cannot stay exact: ") + error.what());
  }
  for (const auto& [name, settings] : config.pools) {
    try {
      check_pool_settings(settings);
    } catch (const InputError& error) {
      throw ConfigError("pools." + name + " cannot stay exact: " + error.what());
    }
  }
}

}  // namespace

void validate_config(const DaemonConfig& config) {
  if (config.data_dir.empty()) throw ConfigError("no data directory: give --data-dir DIR");
  check_endpoints(config.endpoints);
  if (config.limits.max_message_bytes > config.journal.max_record_bytes) {
    throw ConfigError("limits.max_message_bytes (" +
                      std::to_string(config.limits.max_message_bytes) +
                      ") exceeds journal.max_record_bytes (" +
                      std::to_string(config.journal.max_record_bytes) +
                      "): an accepted batch must fit one journal record");
  }
  check_pools(config);
  validate_cluster(config);
}

}  // namespace yoke::daemon
