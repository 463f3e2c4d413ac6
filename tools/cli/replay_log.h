// The daemon's log a `yoke replay` reads: a data directory (or its journal/), or with
// --cluster a cluster's JetStream stream (cluster_log.h). Either way a pool's commits come
// through the postmortem library's LogSource (tools/postmortem/log_source.h), so both replay
// the same way.
#pragma once

#include <cstdint>
#include <memory>
#include <ostream>
#include <string>
#include <vector>

#include "cluster_log.h"
#include "replay_command.h"
#include "tools/postmortem/data_directory.h"
#include "tools/postmortem/log_source.h"

namespace yoke::cli {

class ReplayLog {
 public:
  // Opens the log the options name (for a cluster: connects and checks the stream). Reads
  // nothing yet. Throws CliError as ClusterLog does.
  explicit ReplayLog(const ReplayOptions& options);

  // Reads `options.pool`'s commits (with options.from and options.until); the note of a stop
  // inside a commit goes to `notes`, other notes to stderr. The source must not outlive this.
  // Throws postmortem::ReplayError as LogSource does.
  std::unique_ptr<postmortem::LogSource> read(const ReplayOptions& options, std::ostream& notes);
  // The pools the log holds groups of, sorted (postmortem::log_pools: reads the whole log).
  std::vector<std::string> pools();

  // Names the log in messages: the directory as given, or the stream as described.
  const std::string& name() const { return name_; }
  // For the --report page: "yoked data directory" or "JetStream stream".
  const std::string& kind() const { return kind_; }

 private:
  std::unique_ptr<postmortem::DataDirectory> directory_;  // no cluster
  std::unique_ptr<ClusterLog> cluster_;
  std::string name_;
  std::string kind_;
};

}  // namespace yoke::cli
