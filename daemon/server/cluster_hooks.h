// What the server asks of its cluster part when several daemons share a replicated log
// ([cluster] backend = "jetstream"; daemon/failover/cluster_node.h implements it). The server
// stays ignorant of NATS: it calls these between windows, on its one thread.
#pragma once

#include <chrono>
#include <optional>
#include <string>
#include <vector>

#include "daemon/service/pool_service.h"
#include "yoke/v1/publish.pb.h"
#include "yoke/v1/query.pb.h"

namespace yoke::daemon {

class ClusterHooks {
 public:
  using Clock = std::chrono::steady_clock;
  virtual ~ClusterHooks() = default;

  // How often tick() wants to run.
  virtual std::chrono::milliseconds tick_interval() const = 0;
  // Heartbeats, following, claims. Returns diffs to publish (a takeover's republication).
  virtual std::vector<v1::Diff> tick(PoolService& service, Clock::time_point now) = 0;
  // The server published `diff` on its PUB socket (`publication`: the serialized
  // yoke.v1.Publication it sent): a window the log acknowledged, or a takeover's
  // republication. The cluster part stores it on the pool's diff subject without waiting
  // for NATS (daemon/failover/diff_feed_publisher.h).
  virtual void published(const v1::Diff& diff, const std::string& publication) = 0;
  // The service dropped these pools: the log no longer counted this daemon's windows of them.
  virtual void lost(PoolService& service, const std::vector<std::string>& pools,
                    Clock::time_point now) = 0;
  // The log could not store the open window (a publish timed out: its fate is unknown). Every
  // pool served here is given up (its open batches refused, returned here) and read from the
  // log again before it is claimed anew; the daemon keeps running.
  virtual std::vector<std::pair<Ticket, v1::Ack>> commit_failed(PoolService& service,
                                                                Clock::time_point now) = 0;
  // Snapshots of the pools served here (each pool in its own store), or of `only_pool` alone
  // when given, and the log trimmed below them.
  virtual v1::SnapshotTaken snapshot(PoolService& service,
                                     const std::optional<std::string>& only_pool) = 0;
  // The daemon is stopping after its final snapshot: tell the others, so that standbys claim
  // its pools at once instead of after the takeover time.
  virtual void leave(PoolService& service) = 0;
  // For health and logs: the pools this daemon serves now.
  virtual std::vector<std::string> served() const = 0;
};

}  // namespace yoke::daemon
