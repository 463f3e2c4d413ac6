// yoked: the streaming matching daemon. Reads its settings (flags over a config file over the
// embedded defaults), recovers its pools from the data directory, and serves until SIGTERM or
// SIGINT (docs/contracts.md §5).
#include <algorithm>
#include <chrono>
#include <exception>
#include <iostream>
#include <memory>
#include <thread>

#include <google/protobuf/stubs/logging.h>
#include <spdlog/spdlog.h>

#include "daemon/config/command_line.h"
#include "daemon/config/config_error.h"
#include "daemon/config/config_overrides.h"
#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/nats_library.h"
#include "daemon/failover/cluster_node.h"
#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/journal/journal_commit_log.h"
#include "daemon/logging/log_event.h"
#include "daemon/logging/logger_setup.h"
#include "daemon/service/recovery.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "daemon/storage/storage_error.h"
#include "freed_memory.h"
#include "service_notifier.h"
#include "stop_signals.h"
#include "yoked_server.h"

namespace {

using namespace yoke::daemon;

// Protobuf reports some parse problems (invalid UTF-8 in a string field) on stderr by itself:
// send them through the daemon's log instead.
void route_protobuf_logs() {
  google::protobuf::SetLogHandler([](google::protobuf::LogLevel level, const char* file, int line,
                                     const std::string& message) {
    const LogLevel mapped = level >= google::protobuf::LOGLEVEL_ERROR ? LogLevel::warn
                                                                      : LogLevel::debug;
    log_event(mapped, "protobuf", {{"file", file}, {"line", line}, {"message", message}});
  });
}

void log_recovery(const RecoveryReport& report, const yoke::journal::Recovery& journal) {
  for (const std::string& reason : report.skipped) {
    log_event(LogLevel::warn, "snapshot_skipped", {{"reason", reason}});
  }
  if (journal.lock_waited_ms > 0) {
    log_event(LogLevel::warn, "journal_lock_waited", {{"ms", journal.lock_waited_ms}});
  }
  if (journal.cut) {
    log_event(LogLevel::warn, "journal_tail_cut",
              {{"segment", journal.cut->segment.string()},
               {"offset", journal.cut->offset},
               {"bytes", journal.cut->bytes},
               {"reason", journal.cut->reason}});
  }
  log_event(LogLevel::info, "recovered",
            {{"snapshot_position",
              report.snapshot_position ? std::to_string(*report.snapshot_position) : "none"},
             {"pools", report.pools},
             {"journal_records", report.records},
             {"commits", report.commits}});
}

// The storage backend: the local one, DATA_DIR/journal (segment files) and DATA_DIR/snapshots.
// The service, recovery and the server see only the interfaces.
int serve(const yoke::daemon::DaemonConfig& config) {
  const std::unique_ptr<yoke::journal::JournalCommitLog> journal =
      yoke::journal::JournalCommitLog::open(config.data_dir / "journal", config.journal);
  SnapshotDirectory snapshots(config.data_dir / "snapshots", config.snapshots.keep);
  yoke::storage::CommitLog& log = *journal;
  ServiceNotifier::from_environment().status("recovering from " + config.data_dir.string());
  RecoveryReport report;
  ServiceState state = recover(config, log, snapshots, report);
  log_recovery(report, journal->recovery());
  PoolService service(config, std::move(state), log);
  YokedServer server(config, service, snapshots);
  return server.run();
}

// How long a starting daemon waits for its cluster's stream to answer.
constexpr std::chrono::seconds kStreamWait{30};

// The cluster backend: a JetStream stream shared with the other daemons of the installation;
// this daemon serves the pools the log says it serves, and follows those it may take over.
int serve_in_cluster(const yoke::daemon::DaemonConfig& config) {
  const yoke::cluster::NatsLibrary library;
  yoke::cluster::ConnectionSettings settings;
  settings.servers = config.cluster.servers;
  settings.name = "yoked " + config.cluster.instance;
  // Lookups fail fast during a stream leader election and are asked again on the next tick,
  // rather than blocking the loop for a whole publish timeout each.
  settings.api_timeout = std::min(config.cluster.publish_timeout, std::chrono::milliseconds(1000));
  settings.on_event = [](const yoke::cluster::ConnectionEvent& event) {
    // libnats' callback thread: spdlog's loggers are thread-safe.
    log_event(LogLevel::warn, "nats_connection", {{"event", static_cast<int>(event.kind)},
                                                  {"detail", event.detail}});
  };
  std::unique_ptr<yoke::cluster::NatsConnection> connection;
  try {
    connection = std::make_unique<yoke::cluster::NatsConnection>(settings);
  } catch (const yoke::cluster::ClusterError& error) {
    log_event(LogLevel::critical, "nats_unreachable", {{"reason", error.what()}});
    return kYokedFailure;
  }
  // Servers that answer but whose stream is not ready yet (a cluster restarting elects its
  // leaders) are waited for, a bounded time.
  std::unique_ptr<yoke::jetstream::JetStreamCommitLog> log;
  const auto give_up = std::chrono::steady_clock::now() + kStreamWait;
  for (;;) {
    try {
      log = yoke::jetstream::JetStreamCommitLog::open(
          *connection, yoke::failover::log_settings_of(config.cluster));
      break;
    } catch (const yoke::storage::LogError& error) {
      if (std::chrono::steady_clock::now() >= give_up) throw;
      log_event(LogLevel::warn, "waiting_for_stream", {{"reason", error.what()}});
      std::this_thread::sleep_for(std::chrono::milliseconds(500));
    }
  }
  PoolService service(config, empty_service_state(config), *log);
  yoke::failover::ClusterNode node(config, *connection, *log);
  node.start(service, std::chrono::steady_clock::now());
  log_event(LogLevel::info, "joined_cluster",
            {{"instance", config.cluster.instance},
             {"stream", config.cluster.stream},
             {"nats", connection->connected_url()}});
  YokedServer server(config, service, node);
  return server.run();
}

}  // namespace

int main(int argc, char** argv) {
  route_stop_signals_to_their_own_thread();  // first: every thread started later blocks them
  const CommandLine command_line = parse_command_line(argc, argv);
  if (command_line.exit_code) {
    (*command_line.exit_code == 0 ? std::cout : std::cerr) << command_line.message;
    return *command_line.exit_code;
  }
  DaemonConfig config;
  try {
    config = load_config(command_line.overrides);
  } catch (const ConfigError& error) {
    std::cerr << "yoked: " << error.what() << "\n";
    return kYokedConfigError;
  }
  try {
    install_logger(make_logger(config.logging));
  } catch (const std::exception& error) {
    std::cerr << "yoked: cannot set up logging: " << error.what() << "\n";
    return kYokedConfigError;
  }
  route_protobuf_logs();
  keep_freed_memory_for_reuse();  // before the service allocates its pools
  try {
    const int status = config.cluster.backend == StorageBackend::jetstream
                           ? serve_in_cluster(config)
                           : serve(config);
    log_event(status == kYokedOk ? LogLevel::info : LogLevel::error, "stopped",
              {{"status", status}});
    return status;
  } catch (const std::exception& error) {
    log_event(LogLevel::critical, "cannot_serve", {{"reason", error.what()}});
    return kYokedFailure;
  }
}
