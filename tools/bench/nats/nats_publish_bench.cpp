// yoke_nats_bench: synchronous publishes to a replicated JetStream stream on a local cluster
// (tools/nats_cluster: three nats-server processes on loopback), one at a time, each waiting
// for its acknowledgement, as the JetStream commit log will append windows. Prints the rate,
// latency percentiles, the machine and the settings.
#include <algorithm>
#include <chrono>
#include <cstdio>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/log_publisher.h"
#include "daemon/cluster/nats_library.h"
#include "daemon/cluster/stream_setup.h"
#include "tools/bench/machine_facts.h"
#include "tools/nats_cluster/local_nats_cluster.h"
#include "tools/nats_cluster/server_version.h"

namespace {

using Clock = std::chrono::steady_clock;

double percentile(std::vector<double> sorted_ms, double fraction) {
  const auto index = static_cast<std::size_t>(fraction * static_cast<double>(sorted_ms.size() - 1));
  return sorted_ms[index];
}

int run(int messages, int payload_bytes, int replicas, int nodes) {
  using namespace yoke;
  std::printf("yoke_nats_bench --messages %d --payload-bytes %d --replicas %d --nodes %d\n",
              messages, payload_bytes, replicas, nodes);
  std::printf("machine: %s, %ld usable CPUs, load %s; source %s; %s, libnats %s\n",
              bench::cpu_model().c_str(), bench::usable_cpus(), bench::load_average().c_str(),
              bench::source_commit().c_str(), nats_cluster::server_version().c_str(), nats_GetVersion());

  nats_cluster::LocalClusterSettings cluster_settings;
  cluster_settings.nodes = nodes;
  nats_cluster::LocalNatsCluster cluster(cluster_settings);
  cluster::ConnectionSettings connection_settings;
  connection_settings.servers = cluster.client_urls();
  connection_settings.name = "yoke-nats-bench";
  cluster::NatsConnection connection(connection_settings);
  cluster::StreamSettings stream;
  stream.name = "BENCH";
  stream.subjects = {"bench.>"};
  stream.replicas = replicas;
  stream.max_bytes = std::int64_t{1} << 30;
  cluster::ensure_stream(connection, stream);
  std::printf("cluster: %d nats-server nodes on loopback (%s), stream R%d, file storage, "
              "DiscardNew; one publish at a time, waiting for each ack\n",
              nodes, cluster.directory().c_str(), replicas);

  const std::string payload(static_cast<std::size_t>(payload_bytes), 'w');
  const auto publish = [&](int k) {
    cluster::publish_and_wait(connection, "bench.pool-" + std::to_string(k % 8),
                              {{"yoke-pool-seq", std::to_string(k)}}, payload,
                              std::chrono::milliseconds(5000));
  };
  const int warmup = std::min(500, messages / 10 + 1);
  for (int k = 0; k < warmup; ++k) publish(k);

  std::vector<double> latency_ms;
  latency_ms.reserve(static_cast<std::size_t>(messages));
  const auto started = Clock::now();
  for (int k = 0; k < messages; ++k) {
    const auto before = Clock::now();
    publish(k);
    latency_ms.push_back(std::chrono::duration<double, std::milli>(Clock::now() - before).count());
  }
  const double seconds = std::chrono::duration<double>(Clock::now() - started).count();
  std::sort(latency_ms.begin(), latency_ms.end());
  std::printf("published %d messages (+%d warm-up) of %d bytes in %.2f s: %.0f messages/s\n",
              messages, warmup, payload_bytes, seconds, messages / seconds);
  std::printf("publish-to-ack latency: p50 %.3f ms, p90 %.3f ms, p99 %.3f ms, max %.3f ms\n",
              percentile(latency_ms, 0.50), percentile(latency_ms, 0.90),
              percentile(latency_ms, 0.99), latency_ms.back());
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"Synchronous publishes to an R3 JetStream stream on a local 3-node cluster"};
  int messages = 20000;
  int payload_bytes = 512;
  int replicas = 3;
  int nodes = 3;
  bool quick = false;
  app.add_option("--messages", messages, "messages timed (after a warm-up)")->check(CLI::Range(1, 10000000));
  app.add_option("--payload-bytes", payload_bytes, "bytes per message")->check(CLI::Range(0, 1 << 20));
  app.add_option("--replicas", replicas, "the stream's replicas")->check(CLI::Range(1, 5));
  app.add_option("--nodes", nodes, "nats-server processes")->check(CLI::Range(1, 9));
  app.add_flag("--quick", quick, "500 messages: a smoke test");
  CLI11_PARSE(app, argc, argv);
  if (quick) messages = 500;
  if (replicas > nodes) {
    std::fprintf(stderr, "error: --replicas %d needs at least as many --nodes\n", replicas);
    return 2;
  }
  const yoke::cluster::NatsLibrary library;
  try {
    return run(messages, payload_bytes, replicas, nodes);
  } catch (const std::exception& error) {
    std::fprintf(stderr, "error: %s\n", error.what());
    return 1;
  }
}
