#include "replay_log.h"

#include <filesystem>

namespace yoke::cli {

ReplayLog::ReplayLog(const ReplayOptions& options) {
  if (options.cluster.servers.empty()) {
    path_ = options.script_path;
    name_ = options.script_path;
    kind_ = "yoked data directory";
    return;
  }
  cluster_ = std::make_unique<ClusterLog>(options.cluster);
  name_ = cluster_->describe();
  kind_ = "JetStream stream";
}

JournalCommits& ReplayLog::read(const std::string& pool, bool count_events) {
  commits_.reset();
  if (cluster_) {
    commits_ = std::make_unique<JournalCommits>(cluster_->view(), &cluster_->snapshots_of(pool),
                                                pool, count_events);
  } else {
    commits_ = std::make_unique<JournalCommits>(path_, pool, count_events);
  }
  return *commits_;
}

std::vector<std::string> ReplayLog::pools() {
  return cluster_ ? JournalCommits::pools_in(cluster_->view()) : JournalCommits::pools_in(path_);
}

bool replays_a_log(const ReplayOptions& options) {
  return !options.cluster.servers.empty() || std::filesystem::is_directory(options.script_path);
}

}  // namespace yoke::cli
