#include "journal_commits.h"

#include <cstdint>
#include <iostream>
#include <optional>
#include <set>

#include "cli_error.h"
#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/service/wire_types.h"
#include "daemon/snapshots/snapshot_directory.h"

namespace yoke::cli {
namespace {

struct DataDirectory {
  std::filesystem::path journal;
  std::filesystem::path snapshots;
};

// A data directory holds journal/ and snapshots/; given its journal/, the snapshots are next
// to it.
DataDirectory data_directory(const std::filesystem::path& path) {
  if (std::filesystem::is_directory(path / "journal")) {
    return {path / "journal", path / "snapshots"};
  }
  return {path, path.parent_path() / "snapshots"};
}

}  // namespace

std::vector<std::string> JournalCommits::pools_in(storage::CommitLogView& log) {
  std::set<std::string> pools;
  try {
    const std::unique_ptr<storage::GroupReader> reader = log.read_from(0);
    while (auto group = reader->next()) {
      if (!group->records.empty() && group->records.back().retired()) {
        pools.erase(group->pool);  // until a later group creates it again
      } else {
        pools.insert(group->pool);
      }
    }
  } catch (const std::exception& error) {
    throw CliError(log.describe() + ": " + error.what());
  }
  return {pools.begin(), pools.end()};
}

std::vector<std::string> JournalCommits::pools_in(const std::filesystem::path& path) {
  journal::JournalView log(data_directory(path).journal);
  return pools_in(log);
}

JournalCommits::JournalCommits(const std::filesystem::path& path, const std::string& pool,
                               bool count_events)
    : pool_(pool) {
  const auto [journal_dir, snapshot_dir] = data_directory(path);
  log_name_ = journal_dir.string();
  snapshots_name_ = snapshot_dir.string();
  // Only a directory that is there: opening the store would create it.
  if (std::filesystem::is_directory(snapshot_dir)) {
    owned_snapshots_ = std::make_unique<daemon::SnapshotDirectory>(snapshot_dir, 1 << 30);
    snapshots_ = owned_snapshots_.get();
  }
  journal::JournalView log(journal_dir);
  read_groups(log, count_events);
}

JournalCommits::JournalCommits(storage::CommitLogView& log,
                               const storage::SnapshotStore* snapshots, const std::string& pool,
                               bool count_events)
    : log_name_(log.describe()),
      snapshots_name_(snapshots != nullptr ? snapshots->describe() : "the snapshot store"),
      snapshots_(snapshots),
      pool_(pool) {
  read_groups(log, count_events);
}

void JournalCommits::read_groups(storage::CommitLogView& log, bool count_events) {
  try {
    const std::unique_ptr<storage::GroupReader> reader = log.read_from(0, pool_);
    while (auto group = reader->next()) {
      if (!group->records.empty() && group->records.back().retired()) {
        // The pool's life so far ends here; a later group starts a new one at seq 1.
        retired_at_ = {group->position, group->records.back().seq()};
        groups_.clear();
        event_counts_.clear();
        continue;
      }
      if (count_events) {
        for (const v1::JournalRecord& record : group->records) {
          event_counts_[record.seq()] = static_cast<std::size_t>(record.events_size());
        }
      }
      groups_.push_back(daemon::to_commit_group(std::move(*group)));
    }
    if (retired_at_ && !groups_.empty()) {
      std::cerr << "note: pool " << pool_ << " was retired at seq " << retired_at_->second
                << " (log position " << retired_at_->first
                << ") and created again: replaying its life since\n";
    }
    if (const auto early = reader->stopped_early()) {
      std::cerr << "note: " << *early << ": not replayed\n";
    }
    if (const std::uint64_t skipped = reader->skipped(); skipped > 0) {
      std::cerr << "note: " << skipped << " stored group(s) of pool " << pool_
                << " written by a daemon that no longer owned it: not counted by the log, "
                   "not replayed\n";
    }
  } catch (const std::exception& error) {
    throw CliError(log_name_ + ": " + error.what());
  }
}

std::unique_ptr<Pool> JournalCommits::start(std::uint64_t from_seq) {
  if (groups_.empty() && retired_at_) {
    throw CliError(log_name_ + ": pool " + pool_ + " was retired at seq " +
                   std::to_string(retired_at_->second) + " (log position " +
                   std::to_string(retired_at_->first) +
                   ") and not created again: it holds nothing to replay");
  }
  if (groups_.empty()) {
    // A log trimmed below the pool's newest snapshot, with nothing written since (a daemon
    // stopped right after its snapshot): the snapshot is the whole story.
    if (auto pool = restore_snapshot(UINT64_MAX, true)) return pool;
    throw CliError(log_name_ + ": the journal holds no record of pool " + pool_);
  }
  const v1::JournalRecord& first = groups_.front().records.front();
  if (from_seq > 0) {
    if (auto pool = restore_snapshot(from_seq, true)) return pool;
    std::cerr << "note: no snapshot of pool " << pool_ << " at or before seq " << from_seq
              << " that the journal continues: starting from the journal's first record\n";
  }
  if (first.seq() == 1) {
    std::unique_ptr<Pool> pool = daemon::make_pool(first.created());
    if (!pool) {
      throw CliError(log_name_ + ": the first record of pool " + pool_ +
                     " does not say how the pool was created");
    }
    return pool;
  }
  if (auto pool = restore_snapshot(UINT64_MAX, false)) return pool;
  throw CliError(log_name_ + ": the journal starts at seq " + std::to_string(first.seq()) +
                 " of pool " + pool_ + " and no snapshot in " + snapshots_name_ +
                 " leads up to it");
}

std::unique_ptr<Pool> JournalCommits::restore_snapshot(std::uint64_t most, bool newest) {
  if (snapshots_ == nullptr) return nullptr;
  const std::uint64_t journal_first = groups_.empty() ? 0 : groups_.front().records.front().seq();
  std::optional<v1::SnapshotRecord> best;
  for (const storage::Position position : snapshots_->positions()) {
    // A snapshot from before the pool's last retirement holds an earlier life.
    if (retired_at_ && position <= retired_at_->first) continue;
    try {
      const storage::SnapshotContents contents = snapshots_->read(position);
      for (const v1::SnapshotRecord& record : contents.pools) {
        if (record.pool() != pool_ || record.seq() + 1 < journal_first || record.seq() > most) {
          continue;
        }
        if (!best || (newest ? record.seq() > best->seq() : record.seq() < best->seq())) {
          best = record;
        }
      }
    } catch (const daemon::SnapshotDamage& damage) {
      std::cerr << "note: " << damage.what() << ": skipped\n";
    }
  }
  if (!best) return nullptr;
  std::unique_ptr<Pool> pool;
  try {
    pool = daemon::restore_checked(*best);
  } catch (const daemon::SnapshotDamage& damage) {
    throw CliError(snapshots_name_ + ": " + damage.what());
  }
  while (next_ < groups_.size() && groups_[next_].records.back().seq() <= best->seq()) ++next_;
  snapshot_seq_ = best->seq();
  return pool;
}

const daemon::CommitGroup* JournalCommits::next() {
  return next_ < groups_.size() ? &groups_[next_++] : nullptr;
}

}  // namespace yoke::cli
