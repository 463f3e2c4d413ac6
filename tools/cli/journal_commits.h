// A yoked commit log read back as one pool's commits, for `yoke replay DIR`: the groups the
// daemon committed (daemon/storage/commit_log.h, daemon/service/commit_groups.h), starting
// from an empty pool made with the settings of the pool's first record, or from a snapshot
// when the log no longer holds the pool's first records. Reads through the storage interfaces;
// a data directory opens the local backend (journal/ and snapshots/) read only.
//
// A pool retired and created again has several lives in the log (JournalRecord.retired): the
// commits are those of its current life, the groups after its last retirement (whose seqs
// start at 1 again); snapshots from before that retirement are not used.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <unordered_map>
#include <utility>
#include <vector>

#include "daemon/service/commit_groups.h"
#include "daemon/storage/commit_log.h"
#include "daemon/storage/snapshot_store.h"
#include "yoke/pool.h"

namespace yoke::cli {

class JournalCommits {
 public:
  // `path` is a yoked data directory (holding journal/ and snapshots/) or its journal/
  // directory. Reads the whole journal; throws CliError when it cannot be read, holds no record
  // of `pool`, or starts after the pool's first record with no snapshot to start from.
  // With `count_events`, also keeps how many events each record of the pool holds (events_in),
  // for answers that name the record an event came from.
  JournalCommits(const std::filesystem::path& path, const std::string& pool,
                 bool count_events = false);
  // The same from any backend: `log` is read once here; `snapshots` (may be null) must outlive
  // this. Messages name them by their describe().
  JournalCommits(storage::CommitLogView& log, const storage::SnapshotStore* snapshots,
                 const std::string& pool, bool count_events = false);

  // The names of the pools `log` holds groups of and that are not retired at its end, sorted.
  // Reads the whole log (every pool's subjects): O(bytes stored). Throws CliError naming the log when it cannot be read.
  static std::vector<std::string> pools_in(storage::CommitLogView& log);
  // The same for a data directory (or its journal/), as the first constructor finds it.
  static std::vector<std::string> pools_in(const std::filesystem::path& path);

  // The pool before the first commit next() returns: with from_seq > 0, restored from the
  // newest snapshot of the pool at or before from_seq that the journal continues (else the
  // start below); else empty, made with the settings of the pool's first record, or when the
  // journal no longer holds that record, restored from the oldest snapshot it continues; when
  // the journal holds none of the pool's records any more, from its newest snapshot (then
  // next() returns nothing). Throws CliError when neither holds the pool.
  std::unique_ptr<Pool> start(std::uint64_t from_seq = 0);
  // The pool's seq in the snapshot start() restored, if it restored one.
  std::optional<std::uint64_t> snapshot_seq() const { return snapshot_seq_; }
  // The next commit, or nullptr after the last.
  const daemon::CommitGroup* next();
  // How many events the pool's record `seq` holds (count_events only; 0 when not known). The
  // groups' records do not keep their events: CommitGroup::events has them all, in order.
  std::size_t events_in(std::uint64_t seq) const {
    const auto it = event_counts_.find(seq);
    return it == event_counts_.end() ? 0 : it->second;
  }
  // How many commits next() has left to return (for a progress bar).
  std::size_t remaining() const { return groups_.size() - next_; }

 private:
  // The snapshot of the pool with the largest (newest) or smallest (oldest) seq within
  // [the pool's first seq in the journal - 1, most], restored; nullptr when there is none.
  std::unique_ptr<Pool> restore_snapshot(std::uint64_t most, bool newest);

  // Reads every group of the pool from `log` (the constructors' common part).
  void read_groups(storage::CommitLogView& log, bool count_events);

  std::string log_name_;        // in messages: the journal directory, or the log's describe()
  std::string snapshots_name_;  // the same for the snapshot store
  std::unique_ptr<storage::SnapshotStore> owned_snapshots_;  // the local backend's
  const storage::SnapshotStore* snapshots_ = nullptr;        // null: none to start from
  std::string pool_;
  std::vector<daemon::CommitGroup> groups_;
  std::size_t next_ = 0;
  std::optional<std::uint64_t> snapshot_seq_;
  std::unordered_map<std::uint64_t, std::size_t> event_counts_;  // seq -> events (count_events)
  // The pool's last retirement in the log, if any: the group's position and seq.
  std::optional<std::pair<std::uint64_t, std::uint64_t>> retired_at_;
};

}  // namespace yoke::cli
