// yoke_daemon_bench: yoked under load on this machine over loopback TCP, with the bare ZeroMQ
// figure for the same messages measured in the same run as the physical reference.
//
//   1. raw ZeroMQ: the stream's ingest messages through a DEALER -> ROUTER echo;
//   2. sustained ingest: a city pool of --vertices loaded in one batch, then the stream's
//      batches with --in-flight unacknowledged, every acknowledgement durable (group commit);
//   3. latency: batches sent on a fixed schedule at --rate events per second, send-to-ack
//      percentiles, and commit-to-publish percentiles from the published diffs;
//   4. restart: a pool of --restart-edges edges, stopped cleanly (snapshot) and by SIGKILL
//      after more batches (snapshot + journal), timed from exec to the first health answer;
//   5. multi-pool ingest: 1, 2, 4 and 8 pools of --pool-vertices fed at once (pool_scaling.h),
//      events/s and the ratio to one pool;
//   6. long repair: a base graph of --slow-vertices loaded into one pool while another pool is
//      paced at --pool-rate: that pool's send-to-ack percentiles alone and beside the repair.
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <chrono>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <initializer_list>
#include <iostream>
#include <string>
#include <thread>
#include <vector>

#include <CLI/CLI.hpp>
#include <zmq.hpp>

#include "engine_ceiling.h"
#include "ingest_load.h"
#include "memory_contention.h"
#include "pool_scaling.h"
#include "tools/bench/machine_facts.h"
#include "yoke/v1/publish.pb.h"
#include "yoked_process.h"

namespace {

using namespace yoke;
using namespace yoke::bench;

struct Settings {
  std::string yoked = YOKE_YOKED_BINARY;
  std::size_t vertices = 100000;
  std::size_t events = 400000;
  std::size_t batch = 100;
  std::size_t in_flight = 256;
  double rate = 20000;
  double latency_seconds = 5;
  std::size_t restart_edges = 1000000;
  std::string mix = "bench";
  std::string durability = "group";
  bool quick = false;
  std::size_t pool_vertices = 20000;
  std::size_t pool_events = 200000;
  std::size_t slow_vertices = 100000;
  double pool_rate = 5000;
  std::vector<std::size_t> pool_counts{1, 2, 4, 8};
  bool only_pools = false;
  bool skip_scaling = false;
  bool in_flight_per_pool = false;
  bool pools_without_snapshots = false;
  int worker_nice = -1;  // [service] worker_nice for every yoked started (-1: its default)
};

std::filesystem::path make_work_dir() {
  char pattern[] = "/tmp/yoke-daemon-bench-XXXXXX";
  if (mkdtemp(pattern) == nullptr) throw std::runtime_error("cannot create a temp directory");
  return pattern;
}

void write_config(const std::filesystem::path& file, const YokedEndpoints& endpoints,
                  const std::string& durability, int worker_nice) {
  std::ofstream out(file);
  out << "[endpoints]\n"
      << "ingest = \"" << endpoints.ingest << "\"\n"
      << "publish = \"" << endpoints.publish << "\"\n"
      << "query = \"" << endpoints.query << "\"\n"
      << "metrics = \"" << endpoints.metrics << "\"\n"
      << "[limits]\nmax_message_bytes = 268435456\nmax_events_per_batch = 10000000\n"
      << "[journal]\nmax_record_bytes = 268435456\ndurability = \"" << durability << "\"\n"
      << "[logging]\nlevel = \"warn\"\n";
  if (worker_nice >= 0) out << "[service]\nworker_nice = " << worker_nice << "\n";
}

void print_latency(const char* what, const std::vector<double>& us) {
  std::printf("%-34s p50 %9.0f us  p90 %9.0f us  p99 %9.0f us  max %9.0f us  (%zu)\n", what,
              percentile(us, 50), percentile(us, 90), percentile(us, 99), percentile(us, 100),
              us.size());
}

// The disk's floor under a durable acknowledgement: one 4 KiB append and fdatasync, timed.
std::vector<double> fsync_probe(const std::filesystem::path& dir, int rounds) {
  const std::filesystem::path file = dir / "fsync-probe";
  const int fd = ::open(file.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (fd < 0) throw std::runtime_error("cannot open " + file.string());
  const std::string block(4096, 'y');
  std::vector<double> us;
  for (int i = 0; i < rounds; ++i) {
    const auto start = std::chrono::steady_clock::now();
    if (::write(fd, block.data(), block.size()) != static_cast<ssize_t>(block.size()) ||
        ::fdatasync(fd) != 0) {
      ::close(fd);
      throw std::runtime_error("cannot write " + file.string());
    }
    us.push_back(std::chrono::duration<double, std::micro>(std::chrono::steady_clock::now() - start)
                     .count());
  }
  ::close(fd);
  std::filesystem::remove(file);
  return us;
}

// Collects the commit_to_publish_us of every diff published while it runs.
class DiffListener {
 public:
  DiffListener(zmq::context_t& context, const std::string& endpoint)
      : socket_(context, zmq::socket_type::sub) {
    socket_.set(zmq::sockopt::linger, 0);
    socket_.set(zmq::sockopt::subscribe, "");
    socket_.connect(endpoint);
    thread_ = std::thread([this] { run(); });
  }
  std::vector<double> stop() {
    stopping_ = true;
    thread_.join();
    return commit_to_publish_us_;
  }

 private:
  void run() {
    while (!stopping_) {
      zmq::pollitem_t item{socket_.handle(), 0, ZMQ_POLLIN, 0};
      if (zmq::poll(&item, 1, std::chrono::milliseconds(50)) <= 0) continue;
      zmq::message_t topic, body;
      (void)socket_.recv(topic);
      (void)socket_.recv(body);
      v1::Publication publication;
      if (publication.ParseFromArray(body.data(), static_cast<int>(body.size()))) {
        commit_to_publish_us_.push_back(
            static_cast<double>(publication.diff().timings().commit_to_publish_us()));
      }
    }
  }
  zmq::socket_t socket_;
  std::thread thread_;
  std::atomic<bool> stopping_{false};
  std::vector<double> commit_to_publish_us_;
};

// Before the multi-pool sections: how much this machine's cores slow each other down on loads
// that miss their own cache, which two pools' repairs at once pay in part (README, "The daemon
// under load": a second worker added 0-20% to a pool's CPU per event, this probe 25-72%).
void print_memory_contention(bool quick) {
  const std::uint64_t loads = quick ? 200000 : 2000000;
  std::printf("memory: dependent loads, CPU per load of one thread alone and of each of two at "
              "once:\n");
  for (const std::size_t mib : {1, 16}) {
    const MemoryContention probe = measure_memory_contention(mib << 20, loads);
    std::printf("  %2zu MiB each   alone %6.1f ns   two at once %6.1f ns   ratio %.2f\n", mib,
                probe.alone_ns, probe.together_ns, probe.ratio());
  }
}

int run(const Settings& settings) {
  std::printf("yoke_daemon_bench: yoked over loopback TCP, journal durability %s, worker_nice %s\n",
              settings.durability.c_str(),
              settings.worker_nice < 0 ? "default" : std::to_string(settings.worker_nice).c_str());
  std::printf("machine: %s, %ld usable CPUs, load %s; source %s\n", cpu_model().c_str(),
              usable_cpus(), load_average().c_str(), source_commit().c_str());
  std::printf("settings: city pool of %zu vertices, %zu events in batches of %zu, mix %s, "
              "%zu in flight, paced rate %.0f events/s\n\n",
              settings.vertices, settings.events, settings.batch, settings.mix.c_str(),
              settings.in_flight, settings.rate);

  zmq::context_t context(1);
  const std::filesystem::path work = make_work_dir();

  PoolScalingSettings pools;
  pools.yoked = settings.yoked;
  pools.work = work;
  pools.write_config = [&settings](const std::filesystem::path& file,
                                   const YokedEndpoints& endpoints) {
    write_config(file, endpoints, settings.durability, settings.worker_nice);
  };
  pools.vertices = settings.pool_vertices;
  pools.events = settings.pool_events;
  pools.pool_counts = settings.pool_counts;
  pools.in_flight_per_pool = settings.in_flight_per_pool;
  pools.batch = settings.batch;
  pools.in_flight = settings.in_flight;
  pools.mix = settings.mix;
  pools.slow_vertices = settings.slow_vertices;
  pools.rate = settings.pool_rate;
  pools.seconds = settings.quick ? 1 : 4;
  pools.snapshots = !settings.pools_without_snapshots;
  if (settings.only_pools) {
    if (!settings.skip_scaling) {
      print_memory_contention(settings.quick);
      run_pool_scaling(context, pools);
    }
    run_long_repair(context, pools);
    std::error_code ignored;
    std::filesystem::remove_all(work, ignored);
    return 0;
  }

  // The stream's base graph as one batch, then its batches.
  const CityStream city{settings.vertices, settings.events, settings.batch, settings.mix, 2026};
  const Batches stream = city_batches(city);
  const std::vector<EncodedBatch> batches = encode_batches(stream, "bench", "city", 1);
  const std::size_t paced_batches =
      std::min<std::size_t>(batches.size() - 1,
                            static_cast<std::size_t>(settings.rate * settings.latency_seconds /
                                                     static_cast<double>(settings.batch)));
  const std::size_t sustained_end = batches.size() - paced_batches;
  std::size_t message_bytes = 0;
  for (std::size_t i = 1; i < batches.size(); ++i) message_bytes += batches[i].bytes.size();
  message_bytes /= std::max<std::size_t>(1, batches.size() - 1);

  // 1. The physical reference: the same messages (the stream after its base graph).
  const std::vector<EncodedBatch> reference_batches(batches.begin() + 1, batches.end());
  const LoadResult raw = raw_zmq_reference(context, free_loopback_endpoints().ingest,
                                           reference_batches, settings.in_flight, 40);

  // 2. Sustained ingest.
  const YokedEndpoints endpoints = free_loopback_endpoints();
  const std::filesystem::path config = work / "yoked.toml";
  write_config(config, endpoints, settings.durability, settings.worker_nice);
  YokedProcess daemon(settings.yoked, work / "data", config);
  daemon.wait_ready(context, endpoints.query, std::chrono::seconds(30));
  const LoadResult load = send_pipelined(context, endpoints.ingest, batches, 0, 1, 1);
  const LoadResult sustained =
      send_pipelined(context, endpoints.ingest, batches, 1, sustained_end, settings.in_flight);

  // 3. Latency at a fixed offered load.
  DiffListener listener(context, endpoints.publish);
  std::this_thread::sleep_for(std::chrono::milliseconds(200));  // the subscription settles
  const LoadResult paced =
      send_paced(context, endpoints.ingest, batches, sustained_end, batches.size(),
                 settings.rate / static_cast<double>(settings.batch));
  std::this_thread::sleep_for(std::chrono::milliseconds(200));
  const std::vector<double> publish_us = listener.stop();
  daemon.stop(false);

  std::printf("%-34s %12s %14s %12s\n", "", "batches/s", "events/s", "vs raw ZeroMQ");
  std::printf("%-34s %12.0f %14.0f %12s\n", "raw ZeroMQ echo (same messages)",
              raw.batches_per_second(), raw.events_per_second(), "1");
  std::printf("%-34s %12.0f %14.0f %12.3f\n", "yoked sustained ingest", sustained.batches_per_second(),
              sustained.events_per_second(),
              sustained.events_per_second() / std::max(raw.events_per_second(), 1.0));
  std::printf("  (message %zu bytes on average; base graph of %zu events loaded in %.2f s)\n\n",
              message_bytes, load.events, load.seconds);
  std::printf("at %.0f events/s offered for %.1f s (%zu batches of %zu):\n",
              settings.rate, paced.seconds, paced.batches, settings.batch);
  print_latency("  send to ack", paced.latency_us);
  print_latency("  commit to publish (daemon side)", publish_us);
  print_latency("  send to ack, sustained run", sustained.latency_us);
  print_latency("  disk: 4 KiB write + fdatasync", fsync_probe(work, settings.quick ? 20 : 200));

  // 4. Restart of a larger pool.
  CityStream big = city;
  big.vertices = settings.restart_edges / 3;  // a city graph has about 3 edges per vertex
  big.events = 20000;
  const Batches big_stream = city_batches(big);
  const std::vector<EncodedBatch> big_batches = encode_batches(big_stream, "bench", "big", 1);
  const YokedEndpoints big_endpoints = free_loopback_endpoints();
  write_config(config, big_endpoints, settings.durability, settings.worker_nice);
  const std::filesystem::path big_data = work / "big";
  double first_ready = 0;
  {
    YokedProcess first(settings.yoked, big_data, config);
    first_ready = first.wait_ready(context, big_endpoints.query, std::chrono::seconds(60)).count();
    const LoadResult big_load = send_pipelined(context, big_endpoints.ingest, big_batches, 0, 1, 1);
    std::printf("\nrestart pool: %zu events in its base graph, solved and journalled in %.2f s\n",
                big_load.events, big_load.seconds);
    first.stop(false);  // clean: final snapshot
  }
  YokedProcess clean(settings.yoked, big_data, config);
  const double clean_ready =
      clean.wait_ready(context, big_endpoints.query, std::chrono::seconds(120)).count();
  send_pipelined(context, big_endpoints.ingest, big_batches, 1, big_batches.size(),
                 settings.in_flight);
  clean.stop(true);  // crash: the snapshot plus the journal after it
  YokedProcess crashed(settings.yoked, big_data, config);
  const double crash_ready =
      crashed.wait_ready(context, big_endpoints.query, std::chrono::seconds(120)).count();
  crashed.stop(false);
  std::printf("%-34s %8.2f s (empty data directory)\n", "  start", first_ready);
  std::printf("%-34s %8.2f s (from the shutdown snapshot)\n", "  restart after SIGTERM", clean_ready);
  std::printf("%-34s %8.2f s (snapshot + %zu journalled batches)\n", "  restart after SIGKILL",
              crash_ready, big_batches.size() - 1);

  print_memory_contention(settings.quick);
  run_pool_scaling(context, pools);
  run_long_repair(context, pools);

  std::error_code ignored;
  std::filesystem::remove_all(work, ignored);
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  // The machine ceiling's children (engine_ceiling.h) are this program started again.
  if (argc > 1 && std::string(argv[1]) == kCeilingChildFlag) return ceiling_child_main(argc, argv);
  Settings settings;
  CLI::App app("yoked under load over loopback TCP, against bare ZeroMQ in the same run",
               "yoke_daemon_bench");
  app.add_option("--yoked", settings.yoked, "The daemon binary")->capture_default_str();
  app.add_option("--vertices", settings.vertices, "City pool size")->capture_default_str();
  app.add_option("--events", settings.events, "Events after the base graph")->capture_default_str();
  app.add_option("--batch", settings.batch, "Events per batch")->capture_default_str();
  app.add_option("--in-flight", settings.in_flight, "Unacknowledged batches in the sustained run")
      ->capture_default_str();
  app.add_option("--rate", settings.rate, "Offered events per second in the latency run")
      ->capture_default_str();
  app.add_option("--latency-seconds", settings.latency_seconds, "Length of the latency run")
      ->capture_default_str();
  app.add_option("--restart-edges", settings.restart_edges, "Edges of the restart pool")
      ->capture_default_str();
  app.add_option("--mix", settings.mix, "Event mix (see yoke gen stream --help)")
      ->capture_default_str();
  app.add_option("--durability", settings.durability,
                 "The journal's durability: group (fsync per window), every-batch or none")
      ->check(CLI::IsMember({"group", "every-batch", "none"}))
      ->capture_default_str();
  app.add_option("--worker-nice", settings.worker_nice,
                 "[service] worker_nice of every yoked started (default: the daemon's)")
      ->check(CLI::Range(0, 19));
  app.add_option("--pool-vertices", settings.pool_vertices,
                 "Each pool's size in the multi-pool and long-repair runs")
      ->capture_default_str();
  app.add_option("--pool-events", settings.pool_events,
                 "Events shared among the pools in the multi-pool run")
      ->capture_default_str();
  app.add_option("--slow-vertices", settings.slow_vertices,
                 "Base graph loaded into the slow pool in the long-repair run")
      ->capture_default_str();
  app.add_option("--pool-rate", settings.pool_rate,
                 "Offered events per second of the paced pool in the long-repair run")
      ->capture_default_str();
  app.add_option("--pool-counts", settings.pool_counts,
                 "Pool counts of the multi-pool run, the first the reference")
      ->delimiter(',')
      ->capture_default_str();
  app.add_flag("--only-pools", settings.only_pools, "Run the multi-pool sections alone");
  app.add_flag("--in-flight-per-pool", settings.in_flight_per_pool,
               "Multi-pool run: --in-flight for each pool's client, not shared among them");
  app.add_flag("--skip-scaling", settings.skip_scaling,
               "With --only-pools: the long repair section alone");
  app.add_flag("--pools-without-snapshots", settings.pools_without_snapshots,
               "No after_events snapshot in the long repair section");
  app.add_flag("--quick", settings.quick, "Small sizes: a smoke run of every phase");
  CLI11_PARSE(app, argc, argv);
  if (settings.quick) {
    settings.vertices = 2000;
    settings.events = 20000;
    settings.rate = 5000;
    settings.latency_seconds = 1;
    settings.restart_edges = 30000;
    settings.pool_vertices = 2000;
    settings.pool_events = 8000;
    settings.slow_vertices = 20000;
    settings.pool_rate = 2000;
  }
  try {
    return run(settings);
  } catch (const std::exception& error) {
    std::fprintf(stderr, "yoke_daemon_bench: %s\n", error.what());
    return 1;
  }
}
