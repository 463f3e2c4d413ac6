// A yoked data directory opened read only for a replay: its journal/ as a commit log view and
// its snapshots/ as a snapshot store (the local backend of daemon/storage/). A view never
// changes the directory, so it may be a running daemon's.
#pragma once

#include <filesystem>
#include <memory>
#include <string>

#include "daemon/storage/commit_log.h"
#include "daemon/storage/snapshot_store.h"
#include "log_source.h"

namespace yoke::postmortem {

class DataDirectory {
 public:
  // `path` is a data directory (holding journal/ and snapshots/) or its journal/ directory
  // (the snapshots are then next to it). Reads nothing yet; never creates a directory.
  explicit DataDirectory(const std::filesystem::path& path);
  ~DataDirectory();
  DataDirectory(const DataDirectory&) = delete;
  DataDirectory& operator=(const DataDirectory&) = delete;

  storage::CommitLogView& log() { return *log_; }
  // Null when there is no snapshots/ directory.
  const storage::SnapshotStore* snapshots() const { return snapshots_.get(); }
  // The names for LogSource: `replay` as the user gave it, the journal and snapshot
  // directories' paths.
  LogNames names(const std::string& replay) const;

 private:
  std::filesystem::path journal_;
  std::filesystem::path snapshot_dir_;
  std::unique_ptr<storage::CommitLogView> log_;
  std::unique_ptr<storage::SnapshotStore> snapshots_;
};

}  // namespace yoke::postmortem
