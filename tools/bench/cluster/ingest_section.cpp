// Section 1: the same batches through one yoked on the JetStream backend (a three-node R3
// stream on loopback) and through one on the local journal, by the same client: sustained
// events/s and send-to-ack percentiles with a bounded number in flight, then send-to-ack at a
// fixed offered rate (the one asked for if the JetStream daemon sustains it, else below what
// it sustains, and the local daemon at the same rate).
#include <algorithm>
#include <cstdio>
#include <string>

#include "cluster_sections.h"
#include "tools/bench/cluster/daemon_log.h"
#include "tools/bench/cluster/yoked_configs.h"
#include "tools/bench/daemon/yoked_process.h"

namespace yoke::bench {
namespace {

struct BackendRun {
  LoadResult base, sustained, paced;
  SnapshotPauses paced_snapshots;  // snapshots the daemon wrote during the paced run
};

// Starts the daemon, loads the base graph, runs the sustained part; the paced part is run by
// `pace` (given the sustained result) before the daemon stops.
template <typename Pace>
BackendRun run_backend(BenchContext& run, const std::filesystem::path& dir,
                       const std::filesystem::path& config, const YokedEndpoints& endpoints,
                       const PoolBatches& pool, std::size_t sustained_end, Pace pace) {
  BackendRun out;
  YokedProcess daemon(run.settings.yoked, dir / "data", config);
  daemon.wait_ready(run.zmq, endpoints.query, std::chrono::seconds(60));
  daemon.wait_serving(run.zmq, endpoints.query, "city", std::chrono::seconds(60));
  out.base = load_base(run.zmq, endpoints.ingest, pool);
  out.sustained = send_pipelined(run.zmq, endpoints.ingest, pool.batches, pool.base_count,
                                 sustained_end, run.settings.in_flight);
  const WallClock::time_point paced_from = WallClock::now();
  out.paced = pace(out.sustained);
  const WallClock::time_point paced_to = WallClock::now();
  daemon.stop(false);
  out.paced_snapshots = snapshots_between(dir / "yoked.log", paced_from, paced_to);
  return out;
}

}  // namespace

void run_ingest_section(BenchContext& run) {
  const ClusterBenchSettings& settings = run.settings;
  const PoolBatches pool = draw_pool(settings.ingest_vertices, settings.ingest_events + static_cast<std::size_t>(settings.rate * settings.latency_seconds),
                                     settings.batch, settings.base_chunk, 2026, "city", "ingest");
  const std::size_t paced_batches = std::min<std::size_t>(
      pool.batches.size() - pool.base_count - 1,
      static_cast<std::size_t>(settings.rate * settings.latency_seconds /
                               static_cast<double>(settings.batch)));
  const std::size_t sustained_end = pool.batches.size() - paced_batches;
  DaemonKnobs knobs;
  knobs.snapshot_after_events = settings.ingest_snapshot_after_events;

  // JetStream first: the rate it sustains decides the paced run's rate for both.
  const std::filesystem::path js_dir = run.work / "ingest-jetstream";
  std::filesystem::create_directories(js_dir);
  InstallationPlan plan;
  plan.servers = run.nats_servers;
  plan.stream = "bench-ingest";
  plan.heartbeat_ms = settings.heartbeat_ms;
  plan.takeover_ms = settings.takeover_ms;
  plan.instances.push_back({"solo", free_loopback_endpoints(), {"city"}, {}});
  write_instance_config(js_dir / "yoked.toml", plan, "solo", knobs);
  double rate = settings.rate;
  const auto paced_at = [&](const YokedEndpoints& endpoints) {
    return [&run, &pool, &rate, sustained_end, endpoints](const LoadResult&) {
      return send_paced(run.zmq, endpoints.ingest, pool.batches, sustained_end, pool.batches.size(),
                        rate / static_cast<double>(run.settings.batch));
    };
  };
  const YokedEndpoints js_endpoints = plan.instances[0].endpoints;
  const BackendRun jetstream = run_backend(
      run, js_dir, js_dir / "yoked.toml", js_endpoints, pool, sustained_end,
      [&](const LoadResult& sustained) {
        // Offered above what it sustains, the queue only grows: pace below it instead.
        if (sustained.events_per_second() < settings.rate) rate = 0.8 * sustained.events_per_second();
        return paced_at(js_endpoints)(sustained);
      });

  const std::filesystem::path local_dir = run.work / "ingest-local";
  std::filesystem::create_directories(local_dir);
  const YokedEndpoints local_endpoints = free_loopback_endpoints();
  write_local_config(local_dir / "yoked.toml", local_endpoints, knobs);
  const BackendRun local = run_backend(run, local_dir, local_dir / "yoked.toml", local_endpoints,
                                       pool, sustained_end, paced_at(local_endpoints));

  const std::string snapshots =
      knobs.snapshot_after_events == 0
          ? std::string("snapshots on the timer only")
          : "snapshots every " + std::to_string(knobs.snapshot_after_events) + " events";
  std::printf("1. ingest: city pool of %zu vertices (base graph %zu events in %zu batches), then "
              "%zu events in batches of %zu; %s\n",
              settings.ingest_vertices, pool.base_events, pool.base_count,
              (sustained_end - pool.base_count) * settings.batch, settings.batch,
              snapshots.c_str());
  std::printf("   sustained, %zu in flight        events/s  vs local   send to ack\n",
              settings.in_flight);
  const double local_rate = std::max(local.sustained.events_per_second(), 1.0);
  std::printf("   local journal (%-5s)      %12.0f  %8.3f   %s\n", knobs.durability.c_str(),
              local.sustained.events_per_second(), 1.0,
              latency_ms_text(local.sustained.latency_us).c_str());
  std::printf("   jetstream R3, 3 nodes      %12.0f  %8.3f   %s\n",
              jetstream.sustained.events_per_second(),
              jetstream.sustained.events_per_second() / local_rate,
              latency_ms_text(jetstream.sustained.latency_us).c_str());
  std::printf("   (base graph loaded in %.2f s local, %.2f s jetstream: ratio %.2f)\n",
              local.base.seconds, jetstream.base.seconds,
              jetstream.base.seconds / std::max(local.base.seconds, 1e-9));
  if (rate < settings.rate) {
    std::printf("   jetstream sustains %.0f events/s, below the %.0f asked for: paced at %.0f "
                "events/s (0.8 x sustained) instead\n",
                jetstream.sustained.events_per_second(), settings.rate, rate);
  }
  std::printf("   paced at %.0f events/s for %.1f s (%zu batches)\n", rate, jetstream.paced.seconds,
              jetstream.paced.batches);
  const auto snapshots_text = [](const SnapshotPauses& pauses) {
    char text[96];
    std::snprintf(text, sizeof text, "  (%d snapshots written, longest %llu ms)", pauses.count,
                  static_cast<unsigned long long>(pauses.longest_ms));
    return std::string(text);
  };
  std::printf("   local journal              %s%s\n", latency_ms_text(local.paced.latency_us).c_str(),
              snapshots_text(local.paced_snapshots).c_str());
  std::printf("   jetstream R3, 3 nodes      %s%s\n",
              latency_ms_text(jetstream.paced.latency_us).c_str(),
              snapshots_text(jetstream.paced_snapshots).c_str());
  const double p99_ms = percentile(jetstream.paced.latency_us, 99) / 1000;
  std::printf("   jetstream p99 / local p99: %.2f; target p99 < 10 ms at %.0f events/s: %s\n\n",
              p99_ms * 1000 / std::max(percentile(local.paced.latency_us, 99), 1.0), settings.rate,
              rate < settings.rate ? "not sustained"
                                   : (p99_ms < 10 ? "met" : "missed"));
  std::fflush(stdout);
}

}  // namespace yoke::bench
