// The three sections of yoke_cluster_bench and what they share: the settings, the run's
// context (one ZeroMQ context, a work directory, the local NATS cluster's URLs, the yoked
// binary) and a pool's batches encoded before any clock runs.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include <zmq.hpp>

#include "tools/bench/daemon/ingest_load.h"

namespace yoke::bench {

struct ClusterBenchSettings {
  std::string yoked;
  std::size_t batch = 100;       // events per batch after the base graph
  std::size_t in_flight = 256;   // unacknowledged batches per client in the sustained runs
  std::size_t base_chunk = 20000;  // events per batch of a base graph (a window < 1 MiB)
  // 1. ingest
  std::size_t ingest_vertices = 100000;
  std::size_t ingest_events = 200000;
  double rate = 20000;  // offered events/s of the paced run
  double latency_seconds = 5;
  std::uint64_t ingest_snapshot_after_events = 200000;  // the daemon's default
  // 2. takeover
  std::size_t takeover_vertices = 100000;
  std::size_t takeover_events = 200000;  // sent before the kill
  std::uint64_t snapshot_after_events = 100000;
  int heartbeat_ms = 500;
  int takeover_ms = 3000;
  std::size_t kill_in_flight = 16;  // batches sent, unacknowledged, when the owner is killed
  // 3. aggregate
  std::size_t pair_vertices = 50000;  // per pool
  std::size_t pair_events = 100000;   // per pool
};

struct BenchContext {
  zmq::context_t& zmq;
  std::filesystem::path work;
  std::vector<std::string> nats_servers;
  ClusterBenchSettings settings;
};

// A city pool's batches, numbered 1, 2, ... (client_batch == the pool's seq when all are
// applied): its base graph in chunks of base_chunk events, then the stream's batches.
struct PoolBatches {
  std::vector<EncodedBatch> batches;
  std::size_t base_count = 0;  // batches [0, base_count) are the base graph
  std::size_t base_events = 0;
};
PoolBatches draw_pool(std::size_t vertices, std::size_t events, std::size_t batch,
                      std::size_t base_chunk, std::uint64_t seed, const std::string& pool,
                      const std::string& client_id);

// Sends the base graph one chunk at a time (each acknowledged before the next).
LoadResult load_base(zmq::context_t& context, const std::string& ingest, const PoolBatches& pool);

// "p50 ... p99 ... max ..." in milliseconds of a latency list in microseconds.
std::string latency_ms_text(const std::vector<double>& latency_us);

void run_ingest_section(BenchContext& run);
void run_takeover_section(BenchContext& run);
void run_aggregate_section(BenchContext& run);

}  // namespace yoke::bench
