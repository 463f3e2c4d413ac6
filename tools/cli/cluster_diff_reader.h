// A pool's diffs read from a cluster's stream for `yoke watch --cluster` (issue 12): the
// serving daemon stores each diff it publishes on "<prefix>.diff.<token>"
// (daemon/failover/diff_feed_publisher.h), data = the yoke.v1.Publication its PUB socket
// sends. An ordered consumer on that subject delivers them in stream order, recreated by
// libnats after a lost server or a leader election, so a reader follows the pool across
// failovers of the daemons and of the NATS servers.
#pragma once

#include <atomic>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>

#include "cluster_log.h"
#include "daemon/cluster/log_reader.h"
#include "daemon/cluster/nats_connection.h"
#include "zmq_endpoint_client.h"

namespace yoke::cli {

class ClusterDiffReader {
 public:
  // Connects and checks the stream (CliError as open_cluster_stream()). With `from_seq`, reads
  // from the oldest diff still stored and skips those with seq < from_seq; without, only
  // diffs stored after now (one round trip reads where the subject ends). Creating the
  // consumer is one more round trip.
  ClusterDiffReader(const ClusterLogOptions& cluster, const std::string& pool,
                    std::optional<std::uint64_t> from_seq);
  ~ClusterDiffReader();
  ClusterDiffReader(const ClusterDiffReader&) = delete;
  ClusterDiffReader& operator=(const ClusterDiffReader&) = delete;

  // The next diff's publication bytes. Nothing when `deadline` passes first, or when `stop`
  // (set by a signal handler) turns true; the caller tells the two apart. Throws CliError
  // when the stream cannot be read any more (the connection closed).
  std::optional<std::string> next(Deadline deadline, const std::atomic<bool>* stop);

  // "subject yoke.diff.quay of JetStream stream 'yoke' on nats://...": for messages.
  const std::string& describe() const { return description_; }

 private:
  std::unique_ptr<cluster::NatsConnection> connection_;
  std::unique_ptr<cluster::LogReader> reader_;
  std::optional<std::uint64_t> from_seq_;
  std::string description_;
};

}  // namespace yoke::cli
