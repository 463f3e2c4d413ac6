// A yoked journal read back as one pool's commits, for `yoke replay DIR`: the records grouped
// as the daemon committed them (daemon/service/commit_groups.h), starting from an empty pool
// made with the settings of the pool's first record, or from a snapshot when the journal no
// longer holds the pool's first records.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "daemon/service/commit_groups.h"
#include "engine/pool.h"

namespace yoke::cli {

class JournalCommits {
 public:
  // `path` is a yoked data directory (holding journal/ and snapshots/) or its journal/
  // directory. Reads the whole journal; throws CliError when it cannot be read, holds no record
  // of `pool`, or starts after the pool's first record with no snapshot to start from.
  JournalCommits(const std::filesystem::path& path, const std::string& pool);

  // The pool before the first commit next() returns.
  std::unique_ptr<Pool> start();
  // The pool's seq in the snapshot start() restored, if it restored one.
  std::optional<std::uint64_t> snapshot_seq() const { return snapshot_seq_; }
  // The next commit, or nullptr after the last.
  const daemon::CommitGroup* next();

 private:
  std::filesystem::path journal_dir_;
  std::filesystem::path snapshot_dir_;
  std::string pool_;
  std::vector<daemon::CommitGroup> groups_;
  std::size_t next_ = 0;
  std::optional<std::uint64_t> snapshot_seq_;
};

}  // namespace yoke::cli
