// The daemon's log a `yoke replay` reads: a data directory (or its journal/), or with
// --cluster a cluster's JetStream stream (cluster_log.h). Either way a pool's commits come
// through JournalCommits, so both replay the same way.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "cluster_log.h"
#include "journal_commits.h"
#include "replay_command.h"

namespace yoke::cli {

class ReplayLog {
 public:
  // Opens the log the options name (for a cluster: connects and checks the stream). Reads
  // nothing yet. Throws CliError as ClusterLog does.
  explicit ReplayLog(const ReplayOptions& options);

  // Reads `pool`'s commits (JournalCommits; with `count_events`, the events of each record),
  // replacing the ones read before. Throws CliError as JournalCommits does.
  JournalCommits& read(const std::string& pool, bool count_events);
  // The pools the log holds groups of, sorted (JournalCommits::pools_in: reads the whole log).
  std::vector<std::string> pools();

  // Names the log in messages: the directory as given, or the stream as described.
  const std::string& name() const { return name_; }
  // For the --report page: "yoked data directory" or "JetStream stream".
  const std::string& kind() const { return kind_; }

 private:
  std::string path_;                     // a data directory (no cluster)
  std::unique_ptr<ClusterLog> cluster_;  // before commits_: it must outlive them
  std::unique_ptr<JournalCommits> commits_;
  std::string name_;
  std::string kind_;
};

}  // namespace yoke::cli
