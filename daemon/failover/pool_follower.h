// One pool kept warm by a daemon that does not serve it (a standby): loaded from the pool's
// newest good snapshot, then kept current by applying the windows the log counts, as they
// come. A takeover then costs the windows not read yet, not a restore and a replay of
// everything since the snapshot. Also keeps the diffs of the last windows applied, which a
// takeover republishes so that watchers miss none of what the old owner may not have sent.
// One thread (the daemon's loop).
#pragma once

#include <cstddef>
#include <cstdint>
#include <deque>
#include <string>

#include "daemon/config/daemon_config.h"
#include "daemon/service/pool_service.h"
#include "daemon/storage/commit_log.h"
#include "daemon/storage/snapshot_store.h"
#include "yoke/v1/publish.pb.h"

namespace yoke::failover {

class PoolFollower {
 public:
  // Diffs kept for republication after a takeover.
  static constexpr std::size_t kRecentDiffs = 64;

  // Loads the pool: its newest snapshot in `snapshots` that restores and checks, then every
  // window of the pool the log counts after it. Throws daemon::RecoveryError. O(snapshot +
  // log read).
  PoolFollower(const daemon::DaemonConfig& config, std::string pool,
               storage::CommitLogView& log, const storage::SnapshotStore& snapshots);

  // Applies the pool's windows stored since the last read. Returns how many were applied.
  // Throws daemon::RecoveryError when they do not continue the pool, or when the log was
  // trimmed past what this follower had read (a newer snapshot in `snapshots` covers groups no
  // longer stored): then build the follower again. O(windows read + their repair) plus a few
  // round trips to the log (one more to the store when the pool's subject holds nothing).
  std::size_t catch_up(storage::CommitLogView& log, const storage::SnapshotStore& snapshots);

  const std::string& pool() const { return pool_; }
  // The pool's seq after the last window applied (0: none).
  std::uint64_t seq() const;
  // The log position after which the next window is read.
  storage::Position read_after() const { return read_after_; }
  // The diffs of the last windows applied, oldest first.
  const std::deque<v1::Diff>& recent_diffs() const { return recent_diffs_; }

  // Hands the pool's state over (a takeover): the follower is spent afterwards.
  daemon::PoolState release();

 private:
  std::string pool_;
  daemon::ServiceState state_;
  storage::Position read_after_ = 0;
  std::deque<v1::Diff> recent_diffs_;
};

}  // namespace yoke::failover
