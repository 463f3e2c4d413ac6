// Every setting of yoked, with the defaults it runs on when there is no config file.
// daemon/yoked.example.toml documents each one; a test keeps the two in step.
#pragma once

#include <cstdint>
#include <filesystem>
#include <map>
#include <string>

#include "daemon/journal/journal.h"
#include "daemon/logging/log_settings.h"
#include "daemon/pools/pool_registry.h"

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

struct DaemonConfig {
  std::filesystem::path data_dir;  // no default: the command line must give it
  Endpoints endpoints;
  BatchingSettings batching;
  journal::Options journal;
  SnapshotSettings snapshots;
  InputLimits limits;
  PoolSettings pool_defaults;                 // pools created on first use
  std::map<std::string, PoolSettings> pools;  // declared by name, with their own settings
  LogSettings logging;
};

}  // namespace yoke::daemon
