// Rebuilding the service after a start or a crash: the newest snapshot in the store that can
// be trusted, then every commit group of the log after it, committed as the daemon committed
// it (commit_groups.h). Talks only to the storage interfaces (daemon/storage/).
#pragma once

#include <cstdint>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include "commit_groups.h"
#include "daemon/config/daemon_config.h"
#include "daemon/storage/commit_log.h"
#include "daemon/storage/snapshot_store.h"
#include "pool_service.h"

namespace yoke::daemon {

// The journal cannot be replayed: a record does not apply, a sequence number is missing, or
// no usable snapshot covers the records the journal has dropped. The daemon must not start.
class RecoveryError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

struct RecoveryReport {
  std::optional<std::uint64_t> snapshot_position;  // journal position of the snapshot loaded
  std::vector<std::string> skipped;  // why newer snapshots were passed over
  std::size_t pools = 0;
  std::uint64_t records = 0;  // journal records replayed (in the commit groups read)
  std::uint64_t commits = 0;
};

// Loads the newest snapshot whose pools restore and pass restore_checked, and whose position
// the log still holds from (older ones are fallbacks; why each newer one was passed over goes
// to report.skipped); then applies every group of the log from there, and makes the log's next
// window continue at or after the snapshot's position. Throws RecoveryError when the log
// cannot be read or replayed. O(snapshot + log read).
ServiceState recover(const DaemonConfig& config, storage::CommitLog& log,
                     const storage::SnapshotStore& snapshots, RecoveryReport& report);

// Applies one commit group to the state (recovery, and tools that replay a journal): creates
// the pool from its first record, checks the sequence numbers and the events, commits, and
// records the client marks. Records already in the state (seq <= the pool's) are skipped.
// Returns the commit's result (what its diff says), or nullopt for a group the state held.
// Throws RecoveryError when the group does not continue the pool's history.
std::optional<CommitResult> apply_commit_group(const CommitGroup& group, ServiceState& state);

}  // namespace yoke::daemon
