// One pool's commits in a yoked log as a replay's commits (`yoke replay DATA_DIR`, and with
// --cluster a cluster's stream): the groups the daemon committed, decoded as recovery decodes
// them and checked by recovery's seq rule (daemon/recovery/: a missing seq stops the replay
// with the pool and the seq named), starting from an empty pool made with the settings of the
// pool's first record, or from a snapshot chosen by recovery's choice of snapshot when the log
// no longer holds the pool's first records or a start is asked for. Reads through the storage
// interfaces (daemon/storage/), so any backend will do: data_directory.h opens the local one.
//
// A pool retired and created again has several lives in the log (JournalRecord.retired): the
// commits are those of its current life, the groups after its last retirement (whose seqs
// start at 1 again); snapshots from before that retirement are not used.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <ostream>
#include <string>
#include <unordered_map>
#include <utility>
#include <vector>

#include "commit_source.h"
#include "daemon/recovery/commit_groups.h"
#include "daemon/storage/commit_log.h"
#include "daemon/storage/snapshot_store.h"
#include "yoke/pool.h"

namespace yoke::postmortem {

// How a log is named in messages.
struct LogNames {
  std::string replay;     // as the user named it: in refusals and seq gaps
  std::string log;        // the commit log itself (a journal directory, a stream described)
  std::string snapshots;  // the snapshot store
};

struct LogReplayOptions {
  std::string pool = "default";
  // With from > 0: start from the newest snapshot of the pool at or before seq `from` (if
  // the log continues one). With until > 0: stop after the last commit whose seq is at most
  // `until` (a note says so when `until` falls inside a commit).
  std::uint64_t from = 0;
  std::uint64_t until = 0;
};

// The names of the pools `log` holds groups of and that are not retired at its end, sorted.
// Reads the whole log: O(bytes stored). Throws ReplayError naming the log.
std::vector<std::string> log_pools(storage::CommitLogView& log);

class LogSource : public CommitSource {
 public:
  // Reads every group of the pool from `log` (O(the pool's bytes)); `log` and `snapshots`
  // (may be null: none to start from) must outlive the source. Notes on the way (a pool
  // retired and created again, a damaged tail not replayed, groups the log does not count,
  // snapshots passed over) go to `warnings`; the note of a stop inside a commit to `notes`.
  // Throws ReplayError when the log cannot be read.
  LogSource(storage::CommitLogView& log, const storage::SnapshotStore* snapshots, LogNames names,
            LogReplayOptions options, std::ostream& notes, std::ostream& warnings);

  HistoryUnit unit() const override { return HistoryUnit::seq; }
  // With options.from > 0, the newest snapshot of the pool at or before it that the log
  // continues (else the start below, with a note); else an empty pool made with the settings of
  // the pool's first record, or when the log no longer holds that record, the oldest snapshot
  // it continues; when the log holds none of the pool's records any more, its newest snapshot
  // (then there is nothing to commit). Throws ReplayError when neither holds the pool.
  Pool& start() override;
  std::uint64_t start_point() const override { return snapshot_seq_.value_or(0); }
  bool from_snapshot() const override { return snapshot_seq_.has_value(); }
  // Throws ReplayError naming the log, the pool and the missing seq when the next group does
  // not continue the pool (daemon::place_group, recovery's rule).
  const ReplayedCommit* next() override;
  std::size_t remaining() const override { return groups_.size() - next_; }
  std::string refusal(const ReplayedCommit& commit, const EventError& error) const override;

 private:
  // The pool's snapshot chosen as recovery chooses, among those with a seq in [the pool's
  // first seq in the log - 1, most] of its current life, newest or oldest first; nullptr when
  // there is none.
  std::unique_ptr<Pool> restore_snapshot(std::uint64_t most, bool newest);
  void read_groups();

  storage::CommitLogView& log_;
  const storage::SnapshotStore* snapshots_;
  LogNames names_;
  LogReplayOptions options_;
  std::ostream& notes_;
  std::ostream& warnings_;
  std::vector<daemon::CommitGroup> groups_;
  std::size_t next_ = 0;
  std::unique_ptr<Pool> pool_;
  std::optional<std::uint64_t> snapshot_seq_;
  std::uint64_t last_seq_ = 0;  // the seq of the pool's last record applied
  std::unordered_map<std::uint64_t, std::size_t> event_counts_;  // seq -> events of its record
  // The pool's last retirement in the log, if any: the group's position and seq.
  std::optional<std::pair<std::uint64_t, std::uint64_t>> retired_at_;
  ReplayedCommit current_;
};

}  // namespace yoke::postmortem
