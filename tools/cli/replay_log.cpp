#include "replay_log.h"

#include <filesystem>
#include <iostream>

namespace yoke::cli {

ReplayLog::ReplayLog(const ReplayOptions& options) {
  if (options.cluster.servers.empty()) {
    directory_ = std::make_unique<postmortem::DataDirectory>(options.script_path);
    name_ = options.script_path;
    kind_ = "yoked data directory";
    return;
  }
  cluster_ = std::make_unique<ClusterLog>(options.cluster);
  name_ = cluster_->describe();
  kind_ = "JetStream stream";
}

std::unique_ptr<postmortem::LogSource> ReplayLog::read(const ReplayOptions& options,
                                                       std::ostream& notes) {
  const postmortem::LogReplayOptions wanted{options.pool, options.from, options.until};
  if (cluster_) {
    const storage::SnapshotStore& snapshots = cluster_->snapshots_of(options.pool);
    return std::make_unique<postmortem::LogSource>(
        cluster_->view(), &snapshots,
        postmortem::LogNames{name_, cluster_->view().describe(), snapshots.describe()}, wanted,
        notes, std::cerr);
  }
  return std::make_unique<postmortem::LogSource>(directory_->log(), directory_->snapshots(),
                                                 directory_->names(name_), wanted, notes,
                                                 std::cerr);
}

std::vector<std::string> ReplayLog::pools() {
  return postmortem::log_pools(cluster_ ? cluster_->view() : directory_->log());
}

bool replays_a_log(const ReplayOptions& options) {
  return !options.cluster.servers.empty() || std::filesystem::is_directory(options.script_path);
}

}  // namespace yoke::cli
