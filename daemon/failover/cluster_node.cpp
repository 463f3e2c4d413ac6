#include "cluster_node.h"

#include <algorithm>
#include <utility>

#include "daemon/jetstream/pool_claims.h"
#include "daemon/jetstream/pool_subjects.h"
#include "daemon/logging/log_event.h"
#include "daemon/service/recovery.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/service/unix_time.h"
#include "takeover_rule.h"
#include "yoke/v1/cluster.pb.h"

namespace yoke::failover {
namespace {

using daemon::LogLevel;
using daemon::log_event;

// How often a follower reads the windows stored since its last read.
constexpr std::chrono::milliseconds kFollowInterval{200};

std::uint64_t milliseconds_of(Clock::duration duration) {
  return static_cast<std::uint64_t>(
      std::chrono::duration_cast<std::chrono::milliseconds>(duration).count());
}

std::string beat_subject(const jetstream::PoolSubjects& subjects, const std::string& instance) {
  return subjects.prefix() + ".beat." + jetstream::pool_token(instance);
}

}  // namespace

jetstream::JetStreamLogSettings log_settings_of(const daemon::ClusterSettings& cluster) {
  jetstream::JetStreamLogSettings settings;
  settings.stream = cluster.stream;
  settings.subject_prefix = cluster.subject_prefix;
  settings.replicas = cluster.replicas;
  settings.max_bytes = cluster.max_bytes;
  settings.publish_timeout = cluster.publish_timeout;
  settings.read_timeout = cluster.publish_timeout;
  settings.read_by_lookup = true;  // followers read a few groups at a time, also after a node died
  return settings;
}

ClusterNode::ClusterNode(const daemon::DaemonConfig& config, cluster::NatsConnection& connection,
                         jetstream::JetStreamCommitLog& log)
    : config_(config),
      cluster_(config.cluster),
      connection_(connection),
      log_(log),
      view_(connection, log_settings_of(config.cluster)) {
  const daemon::InstanceSettings& me = cluster_.instances.at(cluster_.instance);
  self_.set_instance(cluster_.instance);
  self_.set_ingest(me.ingest);
  self_.set_query(me.query);
  self_.set_publish(me.publish);
  DiffFeedSettings feed;
  feed.stream = cluster_.stream;
  feed.subject_prefix = cluster_.subject_prefix;
  feed.publish_timeout = cluster_.publish_timeout;
  feed.snapshots_kept = config_.snapshots.keep;
  feed.stale_after = cluster_.heartbeat;
  feed.still_serving = [this](const std::string& pool) { return still_serving(pool); };
  cluster::ConnectionSettings diff_settings = connection_.settings();
  diff_settings.name += "-diffs";
  diff_settings.on_event = nullptr;  // the main connection reports the cluster's state
  diff_settings.send_at_once = true;
  diff_connection_ = std::make_unique<cluster::NatsConnection>(std::move(diff_settings));
  diff_feed_ = std::make_unique<DiffFeedPublisher>(*diff_connection_, feed);
}

ClusterNode::~ClusterNode() = default;

std::chrono::milliseconds ClusterNode::tick_interval() const {
  return std::min<std::chrono::milliseconds>(cluster_.heartbeat / 2, std::chrono::milliseconds(100));
}

std::vector<std::string> ClusterNode::served() const {
  std::vector<std::string> pools;
  for (const auto& [pool, role] : roles_) {
    if (role.served_here) pools.push_back(pool);
  }
  return pools;
}

void ClusterNode::start(daemon::PoolService& service, Clock::time_point now) {
  const jetstream::PoolSubjects& subjects = view_.subjects();
  heartbeats_ = std::make_unique<cluster::PlainSubscription>(connection_, subjects.prefix() + ".beat.*");
  board_ = std::make_unique<HeartbeatBoard>(now);

  const daemon::InstanceSettings& me = cluster_.instances.at(cluster_.instance);
  std::vector<std::string> role_pools = me.owns;
  role_pools.insert(role_pools.end(), me.stands_by.begin(), me.stands_by.end());
  for (const std::string& pool : role_pools) {
    PoolRole& role = roles_[pool];
    role.snapshots = jetstream::JetStreamSnapshotStore::open(
        connection_, log_settings_of(cluster_), config_.snapshots.keep, pool);
    try {
      refresh_ownership(pool, role);
      follow(pool, role);
    } catch (const std::exception& error) {
      // The stream may still be electing its leader: the ticks try again.
      log_event(LogLevel::warn, "pool_follow_failed", {{"pool", pool}, {"reason", error.what()}});
      role.follower.reset();
    }
  }
  // Pools without a role here: refusals name their configured owner until told otherwise.
  for (const auto& [name, instance] : cluster_.instances) {
    if (name == cluster_.instance) continue;
    for (const std::string& pool : instance.owns) {
      if (roles_.count(pool) == 0) service.serve_elsewhere(pool, name);
    }
  }
  for (const auto& [pool, role] : roles_) route(service, pool, role);
  // A configured owner that nobody else serves claims its pools before it reports ready.
  const TakeoverTimes times{cluster_.heartbeat, cluster_.takeover};
  for (auto& [pool, role] : roles_) claim_if_due(service, pool, role, times, now);
  next_beat_ = now;
  next_follow_ = now + kFollowInterval;
}

void ClusterNode::follow(const std::string& pool, PoolRole& role) {
  role.follower = std::make_unique<PoolFollower>(config_, pool, log_, *role.snapshots);
  log_event(LogLevel::info, "pool_followed",
            {{"pool", pool}, {"seq", role.follower->seq()}, {"position", role.follower->read_after()}});
}

void ClusterNode::refresh_ownership(const std::string& pool, PoolRole& role) {
  jetstream::PoolOwnership now = jetstream::pool_ownership(view_, pool);
  if (now.epoch() != role.ownership.epoch()) {
    const std::optional<v1::Owner> owner = now.owner();
    log_event(LogLevel::info, "pool_owner_changed",
              {{"pool", pool},
               {"instance", owner ? owner->instance() : std::string()},
               {"epoch", now.epoch()}});
  }
  role.ownership = std::move(now);
}

void ClusterNode::route(daemon::PoolService& service, const std::string& pool, const PoolRole& role) {
  if (role.served_here) return;  // adopt_pool() made it so
  const std::optional<v1::Owner> owner = role.ownership.owner();
  const bool elsewhere = owner && owner->instance() != cluster_.instance &&
                         cluster_.instances.count(owner->instance()) != 0;
  const std::string serving = elsewhere ? owner->instance() : std::string();
  const daemon::PoolRouting& routing = service.routing();
  if (routing.serving_instance(pool).value_or("") == serving &&
      routing.serving(pool) != daemon::Serving::here) {
    return;
  }
  service.serve_elsewhere(pool, serving);
}

void ClusterNode::beat(daemon::PoolService& service, Clock::time_point now, bool leaving) {
  if (now < next_beat_ && !leaving) return;
  next_beat_ = now + cluster_.heartbeat;
  v1::Heartbeat heartbeat;
  *heartbeat.mutable_owner() = self_;
  for (const auto& [pool, role] : roles_) {
    if (!role.served_here) continue;
    v1::OwnedPool& owned = *heartbeat.add_pools();
    owned.set_pool(pool);
    owned.set_epoch(role.ownership.epoch());
    const daemon::PoolProgress* progress = service.progress(pool);
    owned.set_seq(progress == nullptr ? 0 : progress->seq);
  }
  heartbeat.set_sent_unix_us(daemon::unix_time_us());
  heartbeat.set_beat(++beats_sent_);
  heartbeat.set_leaving(leaving);
  try {
    cluster::publish_plain(connection_, beat_subject(view_.subjects(), cluster_.instance),
                           heartbeat.SerializeAsString());
  } catch (const std::exception& error) {
    log_event(LogLevel::warn, "heartbeat_not_sent", {{"reason", error.what()}});
  }
}

void ClusterNode::leave(daemon::PoolService& service) {
  beat(service, Clock::now(), true);
  if (!cluster::flush_plain(connection_, cluster_.heartbeat)) {
    log_event(LogLevel::warn, "leaving_not_told", {{"reason", "the NATS connection did not flush"}});
  }
}

std::vector<v1::Diff> ClusterNode::tick(daemon::PoolService& service, Clock::time_point now) {
  // A tick far later than asked means this process was stalled: the others' beats of that
  // time may not be read yet, so their silence cannot be judged from what was heard.
  if (last_tick_ != Clock::time_point{} && now - last_tick_ > 2 * tick_interval() + cluster_.heartbeat) {
    log_event(LogLevel::warn, "stalled", {{"ms", milliseconds_of(now - last_tick_)}});
    board_->listen_again(now);
  }
  last_tick_ = now;
  while (auto message = heartbeats_->poll()) {
    v1::Heartbeat heartbeat;
    if (heartbeat.ParseFromString(message->data) && heartbeat.owner().instance() != cluster_.instance) {
      board_->heard(heartbeat, now);
    }
  }
  beat(service, now);
  diff_feed_->pump(now);

  std::vector<v1::Diff> to_publish;
  if (now < next_follow_) return to_publish;
  next_follow_ = now + kFollowInterval;
  const TakeoverTimes times{cluster_.heartbeat, cluster_.takeover};
  for (auto& [pool, role] : roles_) {
    if (role.served_here) continue;
    try {
      refresh_ownership(pool, role);
      if (!role.follower) follow(pool, role);
      role.follower->catch_up(log_, *role.snapshots);
    } catch (const std::exception& error) {
      // The follower is rebuilt from the newest snapshot on the next tick.
      log_event(LogLevel::warn, "pool_follow_failed", {{"pool", pool}, {"reason", error.what()}});
      role.follower.reset();
      continue;
    }
    if (auto diffs = claim_if_due(service, pool, role, times, now)) {
      to_publish.insert(to_publish.end(), diffs->begin(), diffs->end());
    }
    route(service, pool, role);
  }
  return to_publish;
}

std::optional<std::vector<v1::Diff>> ClusterNode::claim_if_due(daemon::PoolService& service,
                                                               const std::string& pool,
                                                               PoolRole& role,
                                                               const TakeoverTimes& times,
                                                               Clock::time_point now) {
  if (role.served_here || !role.follower) return std::nullopt;
  const std::optional<v1::Owner> owner = role.ownership.owner();
  const PoolStanding standing{pool,
                              cluster_.owner_of(pool).value_or(""),
                              cluster_.standbys_of(pool),
                              owner ? std::optional<std::string>(owner->instance()) : std::nullopt,
                              false};
  const std::optional<std::string> reason =
      claim_reason(standing, cluster_.instance, *board_, times, now);
  if (!reason) return std::nullopt;
  return take(service, pool, role, *reason, now);
}

std::optional<std::vector<v1::Diff>> ClusterNode::take(daemon::PoolService& service,
                                                       const std::string& pool, PoolRole& role,
                                                       const std::string& reason,
                                                       Clock::time_point now) {
  const std::optional<v1::Owner> before = role.ownership.owner();
  const std::string silent = before ? before->instance() : cluster_.owner_of(pool).value_or("");
  const Clock::duration silence = board_->silent_for(silent, now);
  const bool left = silence == Clock::duration::max();  // it said it was leaving
  const std::uint64_t silent_ms = left ? 0 : milliseconds_of(silence);
  const jetstream::ClaimResult result = jetstream::claim_pool(
      connection_, log_settings_of(cluster_), pool, self_, role.ownership.epoch(), reason);
  refresh_ownership(pool, role);
  if (!result.accepted) {
    log_event(LogLevel::info, "pool_claim_lost",
              {{"pool", pool}, {"reason", reason}, {"claim", result.claim_sequence}});
    return std::nullopt;
  }
  // The windows the old owner stored before the claim count; none after it does.
  role.follower->catch_up(log_, *role.snapshots);
  const std::uint64_t seq = role.follower->seq();
  // The pool's diff subject ends where the old server's diffs stopped: exactly the later ones
  // are published again, on NATS and ZeroMQ. When the subject cannot be read, the old
  // server's last beat says up to which seq it had published (without a beat all are sent: a
  // watcher drops a seq it has seen), and the diff feed reads the subject on a later tick.
  std::optional<std::uint64_t> published = diff_feed_->resume(pool);
  if (!published) {
    published = 0;
    if (const v1::Heartbeat* last = board_->last(silent)) {
      for (const v1::OwnedPool& owned : last->pools()) {
        if (owned.pool() == pool) published = owned.seq();
      }
    }
  }
  std::vector<v1::Diff> republish;
  for (const v1::Diff& diff : role.follower->recent_diffs()) {
    if (diff.seq() > *published) republish.push_back(diff);
  }
  log_.set_epoch(pool, result.claim_sequence);
  service.adopt_pool(pool, role.follower->release());
  role.follower.reset();
  role.served_here = true;
  route(service, pool, role);
  log_event(LogLevel::info, "pool_taken",
            {{"pool", pool},
             {"reason", reason},
             {"epoch", result.claim_sequence},
             {"seq", seq},
             {"previous", silent},
             {"silent_ms", silent_ms},
             {"previous_left", left},
             {"republished", republish.size()}});
  return republish;
}

void ClusterNode::published(const v1::Diff& diff, const std::string& publication) {
  // When its window closed: a late diff (this process stalled after the acknowledgement) is
  // checked against the claims before it is stored (DiffFeedPublisher::pump()).
  const Clock::time_point closed =
      Clock::now() - std::chrono::microseconds(diff.timings().commit_to_publish_us());
  diff_feed_->publish(diff.pool(), diff.seq(), diff.prev_seq(), publication, closed);
}

bool ClusterNode::still_serving(const std::string& pool) {
  const auto role = roles_.find(pool);
  if (role == roles_.end() || !role->second.served_here) return false;
  return jetstream::pool_ownership(view_, pool).epoch() == role->second.ownership.epoch();
}

void ClusterNode::lost(daemon::PoolService& service, const std::vector<std::string>& pools,
                       Clock::time_point) {
  for (const std::string& pool : pools) {
    const auto it = roles_.find(pool);
    if (it == roles_.end()) continue;
    PoolRole& role = it->second;
    role.served_here = false;
    log_event(LogLevel::warn, "pool_lost", {{"pool", pool}});
    diff_feed_->forget(pool);
    try {
      refresh_ownership(pool, role);
      follow(pool, role);
    } catch (const std::exception& error) {
      log_event(LogLevel::warn, "pool_follow_failed", {{"pool", pool}, {"reason", error.what()}});
      role.follower.reset();
    }
    route(service, pool, role);
  }
}

std::vector<std::pair<daemon::Ticket, v1::Ack>> ClusterNode::commit_failed(
    daemon::PoolService& service, Clock::time_point) {
  log_.resume_after_failure();
  std::vector<std::pair<daemon::Ticket, v1::Ack>> replies;
  for (auto& [pool, role] : roles_) {
    if (!role.served_here) continue;
    role.served_here = false;
    role.follower.reset();  // rebuilt from the log on a later tick
    diff_feed_->forget(pool);  // the next server stores what this one had not
    std::vector<std::pair<daemon::Ticket, v1::Ack>> refused = service.serve_elsewhere(pool, "");
    replies.insert(replies.end(), std::make_move_iterator(refused.begin()),
                   std::make_move_iterator(refused.end()));
    log_event(LogLevel::warn, "pool_given_up", {{"pool", pool}, {"reason", "commit failed"}});
  }
  return replies;
}

v1::SnapshotTaken ClusterNode::snapshot(daemon::PoolService& service,
                                        const std::optional<std::string>& only_pool) {
  v1::SnapshotTaken taken;
  for (auto& [pool, role] : roles_) {
    if (!role.served_here || (only_pool && pool != *only_pool)) continue;
    const std::optional<v1::SnapshotRecord> record = daemon::capture_pool_snapshot(service, pool);
    if (!record) continue;  // nothing applied yet
    const std::string where = role.snapshots->write(record->journal_position(), {*record});
    service.progress_of(pool).last_snapshot_seq = record->seq();
    if (taken.path().empty()) taken.set_path(where);
    v1::SnapshotTaken::Entry& entry = *taken.add_pools();
    entry.set_pool(pool);
    entry.set_seq(record->seq());
    entry.set_incarnation(record->incarnation());
    if (const auto oldest = role.snapshots->oldest_needed()) log_.drop_pool_before(pool, *oldest);
    diff_feed_->snapshot_written(pool, record->seq());
  }
  return taken;
}

}  // namespace yoke::failover
