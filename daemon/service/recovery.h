// Rebuilding the service after a start or a crash: the newest snapshot in the store that can
// be trusted, then every commit group of the log after it, committed as the daemon committed
// it. Talks only to the storage interfaces (daemon/storage/). The rules it reads the log by
// (commit groups, the seq rule, the choice of snapshot, the restored pool's check) are in
// daemon/recovery/, shared with `yoke replay`.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "daemon/config/daemon_config.h"
#include "daemon/recovery/commit_groups.h"
#include "daemon/recovery/recovery_error.h"
#include "daemon/storage/commit_log.h"
#include "daemon/storage/snapshot_store.h"
#include "pool_service.h"

namespace yoke::daemon {

struct RecoveryReport {
  std::optional<std::uint64_t> snapshot_position;  // journal position of the snapshot loaded
  std::vector<std::string> skipped;  // why newer snapshots were passed over
  std::size_t pools = 0;
  std::uint64_t records = 0;  // journal records replayed (in the commit groups read)
  std::uint64_t commits = 0;  // groups applied (not those the state held already)
  // Groups the log holds but does not count (a shared log's windows of a deposed owner).
  std::uint64_t groups_not_counted = 0;
};

// Loads the newest snapshot whose pools restore and pass restore_checked, and whose position
// the log still holds from (older ones are fallbacks; why each newer one was passed over goes
// to report.skipped); then applies every group of the log from there, and makes the log's next
// window continue at or after the snapshot's position. Throws RecoveryError when the log
// cannot be read or replayed. O(snapshot + log read).
ServiceState recover(const DaemonConfig& config, storage::CommitLog& log,
                     const storage::SnapshotStore& snapshots, RecoveryReport& report);

// A state with no pool yet, with the config's pool settings. O(declared pools).
ServiceState empty_service_state(const DaemonConfig& config);

// One pool alone (an instance of a cluster that starts serving or following it): replaces
// whatever `state` holds of `pool` with the newest snapshot in the store that holds the pool,
// restores and whose position the log still holds the pool's groups from (fallbacks as in
// recover()), then applies the pool's groups after it (read_from(position, pool)). Without
// such a snapshot it reads the pool's groups from position 1. The log is only read.
// report.pools is 1 when the pool has state afterwards. Throws RecoveryError as recover().
// O(the pool's snapshot + its groups read).
void recover_pool(storage::CommitLogView& log, const storage::SnapshotStore& snapshots,
                  const std::string& pool, ServiceState& state, RecoveryReport& report);

// Following a pool: applies the groups of `pool` that the log holds above its last_position
// in `state` (from position 1 for a pool the state holds nothing of), adding to `report`. (The
// local journal gives a window's groups one position, so reading from last_position + 1 may
// return the rest of the last window's group: it is skipped by its seqs.)
// Returns how many groups it applied. Call it again later for the groups written since; a
// reader of one's own (CommitLogView::read_from) may instead hand each group to
// apply_commit_group. Throws RecoveryError as recover(). O(the groups read).
std::uint64_t catch_up_pool(storage::CommitLogView& log, const std::string& pool,
                            ServiceState& state, RecoveryReport& report);

// Applies one commit group to the state (recovery, and tools that replay a journal): creates
// the pool from its first record, checks the sequence numbers and the events, commits, and
// records the client marks; the pool's last_position becomes the group's position. A group
// that ends with a retirement (JournalRecord.retired) drops the pool whole instead (its next
// group, if any, starts again at seq 1) and returns an empty CommitResult. Records
// already in the state (seq <= the pool's) are skipped: returns nullopt for a group skipped so,
// the commit's result (what its diff says) for one applied. Throws RecoveryError when the
// group does not continue the pool's history.
std::optional<CommitResult> apply_commit_group(const CommitGroup& group, ServiceState& state);

}  // namespace yoke::daemon
