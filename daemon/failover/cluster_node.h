// This daemon's part in a cluster of daemons that share one JetStream log
// ([cluster] backend = "jetstream"): which pools it serves, follows and claims, and what it
// tells the others. The log's rule (daemon/jetstream/ownership_rule.h) decides who serves a
// pool; this class only decides when to ask (takeover_rule.h) and keeps the pools it may have
// to serve warm (pool_follower.h).
//
// Life of a pool with a role here (owned or stood by for): at start it is loaded as a
// follower; the takeover rule says when to claim it; once the claim is accepted, the follower
// reads the windows up to the claim, the commit log writes under the new epoch, and the pool's
// state moves into the PoolService, which serves it. If the log stops counting this daemon's
// windows of a pool (another daemon claimed it), the service drops it and it is followed again.
//
// Threads: one (the daemon's loop); every call blocks on NATS round trips (stated per call).
#pragma once

#include <chrono>
#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/plain_subject.h"
#include "daemon/config/daemon_config.h"
#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/jetstream/jetstream_snapshot_store.h"
#include "daemon/jetstream/ownership_rule.h"
#include "daemon/server/cluster_hooks.h"
#include "daemon/service/pool_service.h"
#include "diff_feed_publisher.h"
#include "heartbeat_board.h"
#include "pool_follower.h"
#include "takeover_rule.h"
#include "yoke/v1/publish.pb.h"
#include "yoke/v1/query.pb.h"

namespace yoke::failover {

// The JetStream log settings a [cluster] section names.
jetstream::JetStreamLogSettings log_settings_of(const daemon::ClusterSettings& cluster);

class ClusterNode : public daemon::ClusterHooks {
 public:
  // `connection` and `log` must outlive the node. Sends nothing yet; opens a second
  // connection to the same servers for the diffs (throws cluster::ClusterError when it
  // cannot).
  ClusterNode(const daemon::DaemonConfig& config, cluster::NatsConnection& connection,
              jetstream::JetStreamCommitLog& log);
  ~ClusterNode() override;

  // Before serving: subscribes to heartbeats and loads every pool this instance owns or
  // stands by for as a follower; tells `service` who serves each pool of the cluster. Throws
  // daemon::RecoveryError or storage::LogError. O(the pools' snapshots and logs).
  void start(daemon::PoolService& service, Clock::time_point now);

  // How often the loop should call tick().
  std::chrono::milliseconds tick_interval() const override;

  // Between windows: reads heartbeats, beats when due, lets followers catch up, refreshes who
  // serves each pool and claims the pools the takeover rule says to. Returns the diffs to
  // publish (those a takeover republishes). A few round trips per followed pool when
  // following is due; a claim costs its catch-up and a few more.
  std::vector<v1::Diff> tick(daemon::PoolService& service, Clock::time_point now) override;

  // Stores the diff on the pool's diff subject (DiffFeedPublisher): never waits for NATS.
  void published(const v1::Diff& diff, const std::string& publication) override;

  // The service dropped these pools (the log did not count their last windows): follow them.
  void lost(daemon::PoolService& service, const std::vector<std::string>& pools,
            Clock::time_point now) override;

  // Gives up every pool served here after a failed commit (their followers are rebuilt from
  // the log on the next ticks, then the takeover rule claims them again: "restart").
  std::vector<std::pair<daemon::Ticket, v1::Ack>> commit_failed(daemon::PoolService& service,
                                                                Clock::time_point now) override;

  // A snapshot of each pool served here, in that pool's own store (named by the position
  // after its last window), then each pool's log trimmed below its oldest snapshot kept.
  // Call between windows. O(state) plus round trips per pool.
  v1::SnapshotTaken snapshot(daemon::PoolService& service,
                             const std::optional<std::string>& only_pool) override;

  // Beats once more with `leaving` set, and waits (up to a heartbeat interval) until it left.
  void leave(daemon::PoolService& service) override;

  // The pools served here now, sorted.
  std::vector<std::string> served() const override;

 private:
  struct PoolRole {
    std::unique_ptr<PoolFollower> follower;   // while not served here
    std::unique_ptr<jetstream::JetStreamSnapshotStore> snapshots;
    jetstream::PoolOwnership ownership;       // the claims read so far
    bool served_here = false;
  };

  // Whether the log's claims still say this daemon serves `pool` (one round trip; throws
  // as jetstream::pool_ownership).
  bool still_serving(const std::string& pool);
  void beat(daemon::PoolService& service, Clock::time_point now, bool leaving = false);
  void refresh_ownership(const std::string& pool, PoolRole& role);
  void route(daemon::PoolService& service, const std::string& pool, const PoolRole& role);
  std::optional<std::vector<v1::Diff>> take(daemon::PoolService& service, const std::string& pool,
                                            PoolRole& role, const std::string& reason,
                                            Clock::time_point now);
  void follow(const std::string& pool, PoolRole& role);
  std::optional<std::vector<v1::Diff>> claim_if_due(daemon::PoolService& service,
                                                    const std::string& pool, PoolRole& role,
                                                    const TakeoverTimes& times,
                                                    Clock::time_point now);

  const daemon::DaemonConfig& config_;
  const daemon::ClusterSettings& cluster_;
  cluster::NatsConnection& connection_;
  jetstream::JetStreamCommitLog& log_;
  jetstream::JetStreamView view_;  // claims and windows, read
  v1::Owner self_;
  std::map<std::string, PoolRole> roles_;  // pools owned or stood by for here
  std::unique_ptr<cluster::PlainSubscription> heartbeats_;
  std::unique_ptr<HeartbeatBoard> board_;
  // The served pools' diffs on NATS, through a connection of their own that writes each
  // publish at once (ConnectionSettings::send_at_once: a diff handed over before a stall
  // leaves before it, not after the pool was claimed elsewhere).
  std::unique_ptr<cluster::NatsConnection> diff_connection_;
  std::unique_ptr<DiffFeedPublisher> diff_feed_;
  std::uint64_t beats_sent_ = 0;
  Clock::time_point next_beat_{};
  Clock::time_point next_follow_{};
  Clock::time_point last_tick_{};
};

}  // namespace yoke::failover
