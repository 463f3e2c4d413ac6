// The daemon benchmark's multi-pool sections: ingest into 1, 2, 4 and 8 pools at once (the
// repair threads' scaling, as a ratio to one pool in the same run), and one pool's long repair
// against another pool's send-to-ack latency.
#pragma once

#include <cstddef>
#include <filesystem>
#include <functional>
#include <string>
#include <vector>

#include <zmq.hpp>

#include "yoked_process.h"

namespace yoke::bench {

struct PoolScalingSettings {
  std::string yoked;
  std::filesystem::path work;  // a directory for data directories and the config file
  // Writes a yoked config file for these endpoints.
  std::function<void(const std::filesystem::path&, const YokedEndpoints&)> write_config;
  std::size_t vertices = 20000;  // each pool's city base graph
  std::size_t events = 200000;   // after the base graphs, shared among the pools
  std::size_t batch = 100;
  std::vector<std::size_t> pool_counts{1, 2, 4, 8};  // the runs, the first the reference
  std::size_t in_flight = 256;   // shared among the pools' clients
  // Each pool's client keeps `in_flight` batches unacknowledged (the same load per pool as
  // the one-pool run, so the same commit sizes), instead of sharing them.
  bool in_flight_per_pool = false;
  std::string mix = "bench";
  // The long repair section: a paced pool of `vertices` at `rate` events/s for `seconds`, and
  // a base graph of `slow_vertices` loaded into another pool in the middle of it.
  std::size_t slow_vertices = 100000;
  double rate = 5000;
  double seconds = 4;
  // Snapshots after_events at its default in the long repair section (false: none).
  bool snapshots = true;
};

// Prints one line per pool count with events/s, the ratio to the first count's, and the CPU
// time per event of yoked's loop, its other threads and the clients.
void run_pool_scaling(zmq::context_t& context, const PoolScalingSettings& settings);

// Prints the paced pool's send-to-ack percentiles alone and with the other pool's repair, and
// how long that repair held its own pool (from its ack to a query's answer on it).
void run_long_repair(zmq::context_t& context, const PoolScalingSettings& settings);

}  // namespace yoke::bench
