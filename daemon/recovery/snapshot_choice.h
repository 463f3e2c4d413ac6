// Which snapshot a replay of the log starts from, for recovery and `yoke replay DATA_DIR`
// alike: the first of the store's snapshots (newest first, or oldest first) whose position the
// log still holds the groups from, that reads back whole, whose wanted records restore and
// pass restore_checked, and that the caller's wish accepts. The others are passed over, each
// with its reason. Recovery asks for the newest holding every pool (or one pool); a replay
// adds its own bounds (a seq at most --from, the pool's current life).
#pragma once

#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "daemon/storage/commit_log.h"
#include "daemon/storage/snapshot_store.h"
#include "yoke/pool.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {

struct SnapshotWish {
  // The one pool wanted (only its record is restored, and a snapshot without it is passed
  // over), or empty: every pool of the snapshot.
  std::string pool;
  // With a pool: whether its record in the snapshot at this position will do (a seq bound, a
  // life of the pool). Empty: any record.
  std::function<bool(storage::Position, const v1::SnapshotRecord&)> accepts;
  bool oldest_first = false;  // else newest first
  // With a pool, when the caller has read the pool's groups: the seq of the first one the log
  // holds (0: none). A snapshot whose record reaches it (record seq + 1 >= it) is continued by
  // the log even when first_position(pool) is above the snapshot's position: a log that stores
  // each pool apart (a stream's subject) starts a pool's part at its first group, which may
  // come after other pools' groups. Without it, first_position alone decides.
  std::optional<std::uint64_t> first_logged_seq = std::nullopt;
};

struct RestoredPool {
  v1::SnapshotRecord record;  // as stored, engine state included
  std::unique_ptr<Pool> pool;
};

struct ChosenSnapshot {
  storage::Position position = 0;   // the store's name for it: it covers the groups below
  std::vector<RestoredPool> pools;  // in the snapshot's order
};

// A snapshot passed over, and why.
struct SkippedSnapshot {
  enum class Reason {
    log_dropped,  // the log no longer holds the groups after it
    damaged,      // it does not read back, or a record does not restore or check
    not_wanted,   // no record of the pool, or the wish refused it
  };
  storage::Position position = 0;
  Reason reason = Reason::damaged;
  std::string why;
};

// Reads the store's snapshots in the wished order until one qualifies (see above). Appends
// the ones passed over to `skipped`. Nothing when none qualifies. Throws only what the store's
// positions() and the log's first_position() throw besides SnapshotDamage and LogError.
// Cost: every snapshot read until the chosen one, and restoring its wanted records.
std::optional<ChosenSnapshot> choose_snapshot(const storage::CommitLogView& log,
                                              const storage::SnapshotStore& snapshots,
                                              const SnapshotWish& wish,
                                              std::vector<SkippedSnapshot>& skipped);

}  // namespace yoke::daemon
