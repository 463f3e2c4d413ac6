// The daemon's log a `yoke replay` reads: a data directory (or its journal/), or with
// --cluster a cluster's JetStream stream (cluster_log.h). Either way one pool's commits come
// through JournalCommits, so both replay the same way.
#pragma once

#include <memory>
#include <string>

#include "cluster_log.h"
#include "journal_commits.h"
#include "replay_command.h"

namespace yoke::cli {

class ReplayLog {
 public:
  // Opens the log the options name and reads options.pool's commits (JournalCommits; with
  // `count_events`, the events of each record). Throws CliError as JournalCommits and
  // ClusterLog do.
  ReplayLog(const ReplayOptions& options, bool count_events);

  JournalCommits& commits() { return *commits_; }
  // Names the log in messages: the directory as given, or the stream as described.
  const std::string& name() const { return name_; }
  // For the --report page: "yoked data directory" or "JetStream stream".
  const std::string& kind() const { return kind_; }

 private:
  std::unique_ptr<ClusterLog> cluster_;  // before commits_: it must outlive them
  std::unique_ptr<JournalCommits> commits_;
  std::string name_;
  std::string kind_;
};

}  // namespace yoke::cli
