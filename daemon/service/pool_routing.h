// Which pools this daemon serves, and where a client should go for the others. With the local
// backend it serves every pool (nothing to look up). In a cluster (backend jetstream) each pool
// is served by at most one instance at a time, decided by the shared log's claims
// (daemon/failover and daemon/jetstream keep this up to date); a batch or query for a pool
// served elsewhere is refused with NOT_OWNER naming that instance's endpoints, with NOT_OWNER
// and no owner while nobody serves it (a takeover under way), and with UNKNOWN_POOL for a pool
// no instance of the cluster owns.
#pragma once

#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/config/daemon_config.h"
#include "yoke/v1/protocol.pb.h"

namespace yoke::daemon {

enum class Serving {
  here,       // this daemon serves the pool
  elsewhere,  // another instance does
  nobody,     // an instance of the cluster owns it, but no instance serves it right now
  outside,    // no instance of the cluster owns it: no one ever will
};

// What a request for a pool is, for the endpoint a refusal names.
enum class Asked { ingest, query };

class PoolRouting {
 public:
  // Serves every pool here: the local backend.
  PoolRouting() = default;
  // The pools of `cluster`'s instances (backend jetstream), none served by anyone yet;
  // backend local gives PoolRouting() (the instances are not read). O(instances x pools).
  explicit PoolRouting(const ClusterSettings& cluster);

  // True for the local backend: every pool is served here. O(1).
  bool serves_every_pool() const { return every_pool_here_; }

  // How `pool` is served now. O(1) for the local backend, else O(log pools).
  Serving serving(std::string_view pool) const;
  // The instance serving `pool`, when another instance does. O(log pools).
  std::optional<std::string> serving_instance(std::string_view pool) const;
  // The endpoints of an instance of the cluster, as clients reach it; nothing for a name that
  // is not an instance. O(log instances).
  std::optional<v1::Owner> owner(std::string_view instance) const;

  // The refusal of a request for `pool`, or nothing when it is served here. The message says
  // where the pool is served ("pool quillory is served by instance east at tcp://..."), naming
  // the ingest or query endpoint as `asked` says. O(1) locally, else O(log pools).
  std::optional<v1::Error> refusal(std::string_view pool, Asked asked) const;

  // Changes who serves a pool of the cluster. Each throws std::invalid_argument for a pool no
  // instance owns (or for the local routing, which serves everything), serve_elsewhere also
  // for an instance not in the cluster or for this instance itself. O(log pools).
  void serve_here(const std::string& pool);
  void serve_elsewhere(const std::string& pool, const std::string& instance);
  void serve_nobody(const std::string& pool);

  // The pools served here, in name order (empty for the local routing, which serves all).
  std::vector<std::string> served_here() const;
  // This daemon's instance name ("" for the local routing).
  const std::string& instance() const { return instance_; }

 private:
  std::map<std::string, std::string, std::less<>>::iterator entry(const std::string& pool);

  bool every_pool_here_ = true;
  std::string instance_;
  std::map<std::string, v1::Owner, std::less<>> instances_;
  // Every pool some instance owns -> the instance serving it ("" while nobody does).
  std::map<std::string, std::string, std::less<>> served_by_;
};

}  // namespace yoke::daemon
