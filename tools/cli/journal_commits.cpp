#include "journal_commits.h"

#include <iostream>

#include "cli_error.h"
#include "daemon/journal/journal_reader.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/service/wire_types.h"
#include "daemon/snapshots/snapshot_store.h"

namespace yoke::cli {

JournalCommits::JournalCommits(const std::filesystem::path& path, const std::string& pool)
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

std::unique_ptr<Pool> JournalCommits::start() {
  const v1::JournalRecord& first = groups_.front().records.front();
  if (first.seq() == 1) {
    const auto mode = daemon::from_wire(first.created().mode());
    const auto limits = daemon::from_wire(first.created().limits());
    if (!mode || !limits) {
      throw CliError(journal_dir_.string() + ": the first record of pool " + pool_ +
                     " does not say how the pool was created");
    }
    return std::make_unique<Pool>(*mode, *limits);
  }
  // The journal starts later: the oldest snapshot of the pool that the journal continues.
  if (std::filesystem::is_directory(snapshot_dir_)) {
    const daemon::SnapshotStore store(snapshot_dir_, 1 << 30);
    std::vector<std::uint64_t> positions = store.positions();
    for (auto it = positions.rbegin(); it != positions.rend(); ++it) {
      try {
        const daemon::SnapshotContents contents =
            daemon::read_snapshot_file(store.path_for(*it));
        for (const v1::SnapshotRecord& record : contents.pools) {
          if (record.pool() != pool_ || record.seq() + 1 < first.seq()) continue;
          std::unique_ptr<Pool> pool = daemon::restore_checked(record);
          while (next_ < groups_.size() && groups_[next_].records.back().seq() <= record.seq()) {
            ++next_;
          }
          snapshot_seq_ = record.seq();
          return pool;
        }
      } catch (const daemon::SnapshotDamage& damage) {
        std::cerr << "note: " << damage.what() << ": skipped\n";
      }
    }
  }
  throw CliError(journal_dir_.string() + ": the journal starts at seq " +
                 std::to_string(first.seq()) + " of pool " + pool_ +
                 " and no snapshot in " + snapshot_dir_.string() + " leads up to it");
}

const daemon::CommitGroup* JournalCommits::next() {
  return next_ < groups_.size() ? &groups_[next_++] : nullptr;
}

}  // namespace yoke::cli
