// A cluster's log opened read only for `yoke replay --cluster` (issue 12): the installation's
// JetStream stream holds every pool's windows (`<prefix>.ev.<pool>`) and snapshots; the
// commits are read through jetstream::JetStreamView (which applies the log's ownership rule:
// windows of a deposed owner are skipped) and the snapshots through JetStreamSnapshotStore,
// the same interfaces (daemon/storage/) a data directory is read through.
//
// Read only: the stream must exist (a replay never creates one), with the subjects
// "<prefix>.>"; nothing is written or purged.
#pragma once

#include <map>
#include <memory>
#include <string>
#include <vector>

#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/stream_status.h"
#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/jetstream/jetstream_snapshot_store.h"

namespace yoke::cli {

inline constexpr const char* kDefaultStream = "yoke";
inline constexpr const char* kDefaultSubjectPrefix = "yoke";

struct ClusterLogOptions {
  std::vector<std::string> servers;  // nats://HOST:PORT, at least one
  std::string stream = kDefaultStream;
  std::string subject_prefix = kDefaultSubjectPrefix;
};

// Connects to the servers (trying them in order) as client `client_name` and checks that the
// stream exists and holds "<prefix>.>" (one stream-info request). Throws CliError naming the
// servers or the stream when it cannot; `status`, when given, receives the stream's. Used by
// ClusterLog and `yoke watch --cluster`.
std::unique_ptr<cluster::NatsConnection> open_cluster_stream(
    const ClusterLogOptions& options, const std::string& client_name,
    cluster::StreamStatus* status = nullptr);

class ClusterLog {
 public:
  // Connects (trying the servers in order), checks that the stream exists and holds
  // "<prefix>.>" (one stream-info request). Throws CliError naming the servers or the stream
  // when it cannot. Cost: a connect and a few API round trips.
  explicit ClusterLog(const ClusterLogOptions& options);
  ~ClusterLog();
  ClusterLog(const ClusterLog&) = delete;
  ClusterLog& operator=(const ClusterLog&) = delete;

  storage::CommitLogView& view() { return *view_; }
  // Where `pool`'s snapshots are: its own store ("<prefix>.snap.<token>.*", written by the
  // daemons of a cluster) when that holds any, else the installation's ("<prefix>.snap.*",
  // one snapshot of every pool: a single writer). One stream-info request per pool asked.
  const storage::SnapshotStore& snapshots_of(const std::string& pool);
  // "JetStream stream 'yoke' (yoke.ev.> on nats://...)": names the log in messages.
  std::string describe() const { return view_->describe(); }

 private:
  std::unique_ptr<cluster::NatsConnection> connection_;
  std::unique_ptr<jetstream::JetStreamView> view_;
  std::unique_ptr<jetstream::JetStreamSnapshotStore> snapshots_;  // the installation's
  std::map<std::string, std::unique_ptr<jetstream::JetStreamSnapshotStore>> pool_snapshots_;
  jetstream::JetStreamLogSettings settings_;
};

}  // namespace yoke::cli
