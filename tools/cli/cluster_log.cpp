#include "cluster_log.h"

#include <algorithm>
#include <stdexcept>

#include "cli_error.h"
#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/stream_status.h"
#include "daemon/jetstream/pool_subjects.h"
#include "daemon/storage/storage_error.h"

namespace yoke::cli {
namespace {

// Snapshots kept by the store: a replay only reads, so the store never prunes; any number
// above zero does.
constexpr std::size_t kKeepAll = 1000000;

}  // namespace

std::unique_ptr<cluster::NatsConnection> open_cluster_stream(const ClusterLogOptions& options,
                                                             const std::string& client_name,
                                                             cluster::StreamStatus* status_out) {
  std::unique_ptr<cluster::NatsConnection> connection;
  cluster::ConnectionSettings settings;
  settings.servers = options.servers;
  settings.name = client_name;
  settings.max_reconnect_rounds = 3;
  try {
    connection = std::make_unique<cluster::NatsConnection>(std::move(settings));
  } catch (const cluster::ClusterError& error) {
    throw CliError(std::string("cannot reach the NATS cluster: ") + error.what());
  }

  std::string filter;
  try {
    filter = jetstream::PoolSubjects(options.subject_prefix).stream_filter();
  } catch (const std::invalid_argument& error) {
    throw CliError("--subject-prefix '" + options.subject_prefix + "': " + error.what());
  }
  // The store opens by making sure the stream exists as asked; asked with the stream's own
  // settings, that changes nothing, and a stream that is not there is an error here first.
  try {
    const cluster::StreamStatus status = cluster::stream_status(*connection, options.stream);
    if (std::find(status.subjects.begin(), status.subjects.end(), filter) ==
        status.subjects.end()) {
      std::string held;
      for (const std::string& subject : status.subjects) {
        held += (held.empty() ? "" : ", ") + subject;
      }
      throw CliError("JetStream stream '" + options.stream + "' holds " + held + ", not " +
                     filter + " (is --subject-prefix right?)");
    }
    if (status_out != nullptr) *status_out = status;
  } catch (const cluster::ClusterError& error) {
    if (error.kind() == cluster::ClusterErrorKind::not_found) {
      throw CliError("no JetStream stream '" + options.stream + "' on " +
                     connection->servers_text() + " (is --stream right?)");
    }
    throw CliError("JetStream stream '" + options.stream + "': " + error.what());
  }
  return connection;
}

ClusterLog::ClusterLog(const ClusterLogOptions& options) {
  cluster::StreamStatus status;
  connection_ = open_cluster_stream(options, "yoke-replay", &status);
  jetstream::JetStreamLogSettings log;
  log.stream = options.stream;
  log.subject_prefix = options.subject_prefix;
  log.replicas = static_cast<int>(status.replicas);
  log.max_bytes = status.max_bytes;
  try {
    view_ = std::make_unique<jetstream::JetStreamView>(*connection_, log);
    snapshots_ = jetstream::JetStreamSnapshotStore::open(*connection_, log, kKeepAll);
    settings_ = log;
  } catch (const storage::LogError& error) {
    throw CliError(error.what());
  } catch (const std::invalid_argument& error) {
    throw CliError(error.what());
  }
}

ClusterLog::~ClusterLog() = default;

const storage::SnapshotStore& ClusterLog::snapshots_of(const std::string& pool) {
  auto it = pool_snapshots_.find(pool);
  if (it == pool_snapshots_.end()) {
    try {
      it = pool_snapshots_
               .emplace(pool, jetstream::JetStreamSnapshotStore::open(*connection_, settings_,
                                                                      kKeepAll, pool))
               .first;
    } catch (const storage::LogError& error) {
      throw CliError(error.what());
    } catch (const std::invalid_argument& error) {
      throw CliError(error.what());
    }
  }
  try {
    if (!it->second->positions().empty()) return *it->second;
  } catch (const storage::LogError& error) {
    throw CliError(error.what());
  }
  return *snapshots_;
}

}  // namespace yoke::cli
