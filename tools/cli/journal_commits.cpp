#include "journal_commits.h"

#include <cstdint>
#include <iostream>
#include <optional>

#include "cli_error.h"
#include "daemon/journal/journal_reader.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/service/wire_types.h"
#include "daemon/snapshots/snapshot_store.h"

namespace yoke::cli {

JournalCommits::JournalCommits(const std::filesystem::path& path, const std::string& pool,
                               bool count_events)
    : pool_(pool) {
  if (std::filesystem::is_directory(path / "journal")) {
    journal_dir_ = path / "journal";
    snapshot_dir_ = path / "snapshots";
  } else {
    journal_dir_ = path;
    snapshot_dir_ = path.parent_path() / "snapshots";
  }
  try {
    journal::Reader reader = journal::Reader::from_start(journal_dir_);
    daemon::CommitGrouper grouper;
    std::vector<daemon::CommitGroup> done;
    const auto keep_ours = [&] {
      for (daemon::CommitGroup& group : done) {
        if (group.pool == pool_) groups_.push_back(std::move(group));
      }
      done.clear();
    };
    while (auto record = reader.next()) {
      v1::JournalRecord counted;
      if (count_events && counted.ParseFromArray(record->payload.data(),
                                                 static_cast<int>(record->payload.size())) &&
          counted.pool() == pool_) {
        event_counts_[counted.seq()] = static_cast<std::size_t>(counted.events_size());
      }
      grouper.add(record->payload, done);
      keep_ours();
    }
    grouper.finish(done);
    keep_ours();
    if (const auto& tail = reader.tail()) {
      std::cerr << "note: " << tail->segment.string() << " ends in a damaged tail at byte "
                << tail->offset << " (" << tail->reason << "): not replayed\n";
    }
  } catch (const std::exception& error) {
    throw CliError(journal_dir_.string() + ": " + error.what());
  }
  if (groups_.empty()) {
    throw CliError(journal_dir_.string() + ": the journal holds no record of pool " + pool_);
  }
}

std::unique_ptr<Pool> JournalCommits::start(std::uint64_t from_seq) {
  const v1::JournalRecord& first = groups_.front().records.front();
  if (from_seq > 0) {
    if (auto pool = restore_snapshot(from_seq, true)) return pool;
    std::cerr << "note: no snapshot of pool " << pool_ << " at or before seq " << from_seq
              << " that the journal continues: starting from the journal's first record\n";
  }
  if (first.seq() == 1) {
    std::unique_ptr<Pool> pool = daemon::make_pool(first.created());
    if (!pool) {
      throw CliError(journal_dir_.string() + ": the first record of pool " + pool_ +
                     " does not say how the pool was created");
    }
    return pool;
  }
  if (auto pool = restore_snapshot(UINT64_MAX, false)) return pool;
  throw CliError(journal_dir_.string() + ": the journal starts at seq " +
                 std::to_string(first.seq()) + " of pool " + pool_ +
                 " and no snapshot in " + snapshot_dir_.string() + " leads up to it");
}

std::unique_ptr<Pool> JournalCommits::restore_snapshot(std::uint64_t most, bool newest) {
  if (!std::filesystem::is_directory(snapshot_dir_)) return nullptr;
  const std::uint64_t journal_first = groups_.front().records.front().seq();
  const daemon::SnapshotStore store(snapshot_dir_, 1 << 30);
  std::optional<v1::SnapshotRecord> best;
  for (const std::uint64_t position : store.positions()) {
    try {
      const daemon::SnapshotContents contents =
          daemon::read_snapshot_file(store.path_for(position));
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
    throw CliError(snapshot_dir_.string() + ": " + damage.what());
  }
  while (next_ < groups_.size() && groups_[next_].records.back().seq() <= best->seq()) ++next_;
  snapshot_seq_ = best->seq();
  return pool;
}

const daemon::CommitGroup* JournalCommits::next() {
  return next_ < groups_.size() ? &groups_[next_++] : nullptr;
}

}  // namespace yoke::cli
