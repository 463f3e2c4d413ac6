// Every setting of yoked, with the defaults it runs on when there is no config file.
// daemon/yoked.example.toml documents each one; a test keeps the two in step.
#pragma once

#include <chrono>
#include <cstdint>
#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/journal/journal.h"
#include "daemon/logging/log_settings.h"
#include "daemon/pools/pool_registry.h"
#include "daemon/pools/retry_ledger.h"

namespace yoke::daemon {

// ZeroMQ endpoints (tcp://HOST:PORT or ipc://PATH) and the metrics HTTP address (HOST:PORT).
// Loopback only by default: exposing the daemon is the operator's explicit choice.
struct Endpoints {
  std::string ingest = "tcp://127.0.0.1:7410";
  std::string publish = "tcp://127.0.0.1:7411";
  std::string query = "tcp://127.0.0.1:7412";
  std::string metrics = "127.0.0.1:7413";
};

// The batching window: batches arriving together are journalled and repaired as one group.
struct BatchingSettings {
  std::uint64_t max_delay_us = 1000;  // longest a batch waits for others
  std::uint64_t max_events = 10000;   // the window closes early once it holds this many events
};

// How the daemon uses the machine's cores.
struct ServiceSettings {
  // Worker threads that repair pools (each pool's windows in order, different pools at once);
  // the loop thread answers the sockets beside them. 0: one per CPU this process may use.
  std::uint64_t repair_threads = 0;
  // Added to the daemon's niceness for the repair workers and the snapshot writer, so that
  // a long repair yields a shared core to the loop, which acknowledges other pools' batches
  // (0..19; 0: the loop's niceness).
  std::uint64_t worker_nice = 5;
};

struct SnapshotSettings {
  std::uint64_t interval_seconds = 300;
  std::uint64_t keep = 2;  // newest snapshots kept; older ones are the fallback for a bad one
  // Also a snapshot once this many events were journalled since the last one (0: timer
  // only): bounds what a restart after a crash must replay.
  std::uint64_t after_events = 200000;
};

// What one client message may carry.
struct InputLimits {
  std::uint64_t max_message_bytes = std::uint64_t{4} << 20;
  std::uint64_t max_events_per_batch = 100000;
  std::uint64_t max_pools = 10000;  // a batch naming a new pool past this is refused
};

// Where the daemon keeps its commit log and snapshots: in DATA_DIR (one daemon), or in a
// NATS JetStream stream that several daemons of one installation share (cluster mode).
enum class StorageBackend { local, jetstream };

// One daemon of a cluster, as every daemon's config file describes it (the same
// [cluster.instances.NAME] tables in each file).
struct InstanceSettings {
  // The endpoints its clients use to reach it (advertised in NOT_OWNER refusals; never "*").
  std::string ingest;
  std::string query;
  std::string publish;
  std::vector<std::string> owns;       // pools it owns when it runs
  std::vector<std::string> stands_by;  // pools it takes over when their owner is silent
};

// The [cluster] section. With backend local nothing else in it applies.
struct ClusterSettings {
  StorageBackend backend = StorageBackend::local;
  std::vector<std::string> servers;  // NATS URLs; required for jetstream
  std::string stream = "yoke";       // the installation's stream
  std::string subject_prefix = "yoke";  // the stream holds "<prefix>.>"
  int replicas = 3;                     // used when the stream is created
  std::int64_t max_bytes = std::int64_t{1} << 30;  // the stream's cap
  std::string instance;                 // this daemon: a key of `instances`
  std::chrono::milliseconds heartbeat{500};
  std::chrono::milliseconds takeover{3000};
  std::chrono::milliseconds publish_timeout{5000};
  std::map<std::string, InstanceSettings> instances;  // by instance name

  // The instance configured to own `pool`, or nothing when none does. O(instances x owns).
  std::optional<std::string> owner_of(std::string_view pool) const;
  // The instances standing by for `pool`, in instance name order (their takeover rank).
  // O(instances x stands_by).
  std::vector<std::string> standbys_of(std::string_view pool) const;
};

struct DaemonConfig {
  std::filesystem::path data_dir;  // no default: the command line must give it
  Endpoints endpoints;
  BatchingSettings batching;
  ServiceSettings service;
  // yoked waits up to 10 s for the journal's lock: a daemon restarted right after a SIGKILL finds
  // it held until the kernel has torn the killed process down (about 0.5 s for a large one).
  journal::Options journal{.lock_wait_ms = 10'000};
  SnapshotSettings snapshots;
  InputLimits limits;
  LedgerSettings ledger;  // the retry ledger's exactly-once horizon
  PoolSettings pool_defaults;                 // pools created on first use
  std::map<std::string, PoolSettings> pools;  // declared by name, with their own settings
  LogSettings logging;
  ClusterSettings cluster;
};

}  // namespace yoke::daemon
