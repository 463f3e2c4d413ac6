// What the commit log and the snapshot store of one installation share: the stream both live
// in, and how daemon/cluster's errors become the storage interface's.
#pragma once

#include <string>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/stream_status.h"
#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {

// Runs `operation`; a cluster::ClusterError it throws becomes a storage::LogError whose
// message is `context: ` and the cluster's message.
template <typename Operation>
auto as_log_error(const std::string& context, Operation&& operation) {
  try {
    return operation();
  } catch (const cluster::ClusterError& error) {
    throw storage::LogError(context + ": " + error.what());
  }
}

// Makes sure the installation's stream exists with `settings` (one stream holding
// "<prefix>.>"; cluster::ensure_stream) and returns its status. Throws LogError naming the
// stream, std::invalid_argument for a bad subject prefix.
cluster::StreamStatus ensure_log_stream(cluster::NatsConnection& connection,
                                        const JetStreamLogSettings& settings);

}  // namespace yoke::jetstream
