// The snapshot directory: one file per snapshot, named by journal position (FORMAT.md), the
// newest `keep` of them kept so that a damaged newest one has an older one to fall back on.
#pragma once

#include <cstdint>
#include <filesystem>
#include <optional>
#include <vector>

#include "snapshot_file.h"

namespace yoke::daemon {

class SnapshotStore {
 public:
  // Creates the directory if needed. keep >= 1.
  SnapshotStore(std::filesystem::path directory, std::size_t keep);

  const std::filesystem::path& directory() const { return directory_; }

  // Writes a snapshot at `journal_position` and deletes the files beyond the newest `keep`
  // (and leftover temporary files). Returns the path written.
  std::filesystem::path write(std::uint64_t journal_position,
                              const std::vector<v1::SnapshotRecord>& pools);

  // Journal positions of the snapshot files present, newest first.
  std::vector<std::uint64_t> positions() const;

  // The oldest position kept: the journal must be kept from here on (a fallback may need it).
  std::optional<std::uint64_t> oldest_kept() const;

  std::filesystem::path path_for(std::uint64_t journal_position) const;

 private:
  void prune();

  std::filesystem::path directory_;
  std::size_t keep_;
};

}  // namespace yoke::daemon
