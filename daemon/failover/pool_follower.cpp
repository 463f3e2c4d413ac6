#include "pool_follower.h"

#include <chrono>
#include <utility>

#include "daemon/recovery/commit_groups.h"
#include "daemon/service/diff_message.h"
#include "daemon/service/recovery.h"
#include "daemon/storage/storage_error.h"

namespace yoke::failover {

PoolFollower::PoolFollower(const daemon::DaemonConfig& config, std::string pool,
                           storage::CommitLogView& log, const storage::SnapshotStore& snapshots)
    : pool_(std::move(pool)), state_(daemon::empty_service_state(config)) {
  daemon::RecoveryReport report;
  daemon::recover_pool(log, snapshots, pool_, state_, report);
  const auto progress = state_.progress.find(pool_);
  if (progress != state_.progress.end()) read_after_ = progress->second.last_position;
}

std::uint64_t PoolFollower::seq() const {
  const auto progress = state_.progress.find(pool_);
  return progress == state_.progress.end() ? 0 : progress->second.seq;
}

std::size_t PoolFollower::catch_up(storage::CommitLogView& log,
                                   const storage::SnapshotStore& snapshots) {
  std::size_t applied = 0;
  try {
    // A reader finds dropped groups by the links of those still stored; when the owner trimmed
    // every group of the pool (below its newest snapshot), only the snapshot tells.
    if (log.first_position(pool_) == 0) {
      const std::vector<storage::Position> kept = snapshots.positions();
      if (!kept.empty() && kept.front() > read_after_ + 1) {
        throw daemon::RecoveryError("pool " + pool_ + ": the log was trimmed below position " +
                                    std::to_string(kept.front()) + ", past what was read (" +
                                    std::to_string(read_after_) + "): load the snapshot");
      }
    }
    const auto reader = log.read_from(read_after_ + 1, pool_);
    while (auto logged = reader->next()) {
      const storage::Position position = logged->position;
      const std::uint64_t seq_before = seq();
      const auto start = std::chrono::steady_clock::now();
      const daemon::CommitGroup group = daemon::to_commit_group(std::move(*logged));
      const std::optional<CommitResult> result = daemon::apply_commit_group(group, state_);
      read_after_ = position;
      if (!result) continue;
      const auto repair_us = static_cast<std::uint64_t>(
          std::chrono::duration_cast<std::chrono::microseconds>(
              std::chrono::steady_clock::now() - start)
              .count());
      recent_diffs_.push_back(daemon::diff_of_commit(
          pool_, *result, seq(), seq_before, state_.progress[pool_].no_perfect_matching,
          repair_us));
      recent_diffs_.back().set_incarnation(state_.progress[pool_].incarnation);
      if (recent_diffs_.size() > kRecentDiffs) recent_diffs_.pop_front();
      ++applied;
    }
  } catch (const storage::LogError& error) {
    throw daemon::RecoveryError(error.what());
  } catch (const InputError& error) {
    throw daemon::RecoveryError(error.what());
  }
  return applied;
}

daemon::PoolState PoolFollower::release() {
  std::optional<daemon::PoolState> released = daemon::take_pool_state(state_, pool_);
  read_after_ = 0;
  recent_diffs_.clear();
  return released ? std::move(*released) : daemon::PoolState{};
}

}  // namespace yoke::failover
