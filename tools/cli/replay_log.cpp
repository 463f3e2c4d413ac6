#include "replay_log.h"

#include <filesystem>

namespace yoke::cli {

ReplayLog::ReplayLog(const ReplayOptions& options, bool count_events) {
  if (options.cluster.servers.empty()) {
    name_ = options.script_path;
    kind_ = "yoked data directory";
    commits_ = std::make_unique<JournalCommits>(options.script_path, options.pool, count_events);
    return;
  }
  cluster_ = std::make_unique<ClusterLog>(options.cluster);
  name_ = cluster_->describe();
  kind_ = "JetStream stream";
  commits_ = std::make_unique<JournalCommits>(cluster_->view(), &cluster_->snapshots(),
                                              options.pool, count_events);
}

bool replays_a_log(const ReplayOptions& options) {
  return !options.cluster.servers.empty() || std::filesystem::is_directory(options.script_path);
}

}  // namespace yoke::cli
