#include "data_directory.h"

#include "daemon/journal/journal_commit_log.h"
#include "daemon/snapshots/snapshot_directory.h"

namespace yoke::postmortem {

DataDirectory::DataDirectory(const std::filesystem::path& path) {
  if (std::filesystem::is_directory(path / "journal")) {
    journal_ = path / "journal";
    snapshot_dir_ = path / "snapshots";
  } else {
    journal_ = path;
    snapshot_dir_ = path.parent_path() / "snapshots";
  }
  log_ = std::make_unique<journal::JournalView>(journal_);
  // Only a directory that is there: opening the store would create it.
  if (std::filesystem::is_directory(snapshot_dir_)) {
    snapshots_ = std::make_unique<daemon::SnapshotDirectory>(snapshot_dir_, 1 << 30);
  }
}

DataDirectory::~DataDirectory() = default;

LogNames DataDirectory::names(const std::string& replay) const {
  return {replay, journal_.string(), snapshot_dir_.string()};
}

}  // namespace yoke::postmortem
