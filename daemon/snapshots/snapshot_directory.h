// The local snapshot store (daemon/storage/snapshot_store.h): a directory with one file per
// snapshot, named by journal position (FORMAT.md), the newest `keep` of them kept so that a
// damaged newest one has an older one to fall back on.
//
// Errors: storage::LogError when the directory or a file cannot be listed, read or written
// (the message names it), storage::SnapshotDamage when a file fails its checks.
#pragma once

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "daemon/storage/snapshot_store.h"
#include "snapshot_file.h"

namespace yoke::daemon {

class SnapshotDirectory : public storage::SnapshotStore {
 public:
  // Creates the directory if needed. keep >= 1 (0 counts as 1).
  SnapshotDirectory(std::filesystem::path directory, std::size_t keep);

  const std::filesystem::path& directory() const { return directory_; }
  std::filesystem::path path_for(std::uint64_t journal_position) const;

  std::string describe() const override;
  // Writes the file atomically (FORMAT.md), then deletes the files beyond the newest `keep`
  // and leftover temporary files. Returns the path written.
  std::string write(storage::Position position,
                    const std::vector<v1::SnapshotRecord>& pools) override;
  // The positions in the names of the snapshot files present, newest first.
  std::vector<storage::Position> positions() const override;
  // read_snapshot_file of path_for(position); a header naming another position is damage.
  storage::SnapshotContents read(storage::Position position) const override;
  // The oldest file's position.
  std::optional<storage::Position> oldest_needed() const override;

 private:
  void prune();

  std::filesystem::path directory_;
  std::size_t keep_;
};

}  // namespace yoke::daemon
