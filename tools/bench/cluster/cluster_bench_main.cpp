// yoke_cluster_bench: yoked on the JetStream backend against a three-node nats-server cluster
// on loopback that the benchmark starts (tools/nats_cluster) and stops by PID, with yoked as
// child processes, in one run:
//   1. ingest: the same batches through the JetStream backend and the local journal;
//   2. takeover: the owner of a pool SIGKILLed, its standby's first acknowledgement of a
//      resent batch timed by the client;
//   3. aggregate: two pools on two instances against both on one instance.
// Every comparison is printed as a ratio of figures from this run: the machine is shared.
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <set>
#include <string>

#include <CLI/CLI.hpp>

#include "cluster_sections.h"
#include "daemon/cluster/nats_library.h"
#include "tools/bench/machine_facts.h"
#include "tools/nats_cluster/local_nats_cluster.h"
#include "tools/nats_cluster/server_version.h"

namespace yoke::bench {
namespace {

std::filesystem::path make_work_dir() {
  char pattern[] = "/tmp/yoke-cluster-bench-XXXXXX";
  if (mkdtemp(pattern) == nullptr) throw std::runtime_error("cannot create a temp directory");
  return pattern;
}

int run(const ClusterBenchSettings& settings, const std::set<std::string>& sections, bool keep) {
  std::printf("yoke_cluster_bench: yoked on JetStream (3 nats-server nodes on loopback, R3) "
              "against the local journal\n");
  std::printf("machine: %s, %ld usable CPUs, load %s; source %s; %s\n", cpu_model().c_str(),
              usable_cpus(), load_average().c_str(), source_commit().c_str(),
              nats_cluster::server_version().c_str());
  zmq::context_t context(1);
  const std::filesystem::path work = make_work_dir();
  int status = 0;
  {
    nats_cluster::LocalNatsCluster nats;
    std::printf("nats cluster: %s; work directory %s\n\n", nats.directory().c_str(), work.c_str());
    std::fflush(stdout);
    BenchContext bench{context, work, nats.client_urls(), settings};
    try {
      if (sections.count("ingest") != 0) run_ingest_section(bench);
      if (sections.count("takeover") != 0) run_takeover_section(bench);
      if (sections.count("aggregate") != 0) run_aggregate_section(bench);
    } catch (const std::exception& error) {
      std::fprintf(stderr, "yoke_cluster_bench: %s (daemon logs kept in %s)\n", error.what(),
                   work.c_str());
      keep = true;
      status = 1;
    }
  }  // the nats-server nodes are stopped here, by PID
  if (!keep) {
    std::error_code ignored;
    std::filesystem::remove_all(work, ignored);
  }
  return status;
}

}  // namespace
}  // namespace yoke::bench

int main(int argc, char** argv) {
  yoke::bench::ClusterBenchSettings settings;
  settings.yoked = YOKE_YOKED_BINARY;
  std::vector<std::string> chosen = {"ingest", "takeover", "aggregate"};
  bool quick = false;
  bool keep = false;
  CLI::App app("yoked on JetStream against the local journal, takeover and two-instance runs",
               "yoke_cluster_bench");
  app.add_option("--yoked", settings.yoked, "The daemon binary")->capture_default_str();
  app.add_option("--sections", chosen, "Which sections to run")
      ->check(CLI::IsMember({"ingest", "takeover", "aggregate"}))
      ->capture_default_str();
  app.add_option("--batch", settings.batch, "Events per batch")->capture_default_str();
  app.add_option("--in-flight", settings.in_flight, "Unacknowledged batches per client")
      ->capture_default_str();
  app.add_option("--ingest-vertices", settings.ingest_vertices, "1: the pool's size")
      ->capture_default_str();
  app.add_option("--ingest-events", settings.ingest_events, "1: events of the sustained run")
      ->capture_default_str();
  app.add_option("--rate", settings.rate, "1: offered events/s of the paced run")
      ->capture_default_str();
  app.add_option("--latency-seconds", settings.latency_seconds, "1: length of the paced run")
      ->capture_default_str();
  app.add_option("--ingest-snapshot-after-events", settings.ingest_snapshot_after_events,
                 "1: [snapshots] after_events (0: timer only)")
      ->capture_default_str();
  app.add_option("--takeover-vertices", settings.takeover_vertices, "2: the pool's size")
      ->capture_default_str();
  app.add_option("--takeover-events", settings.takeover_events, "2: events before the kill")
      ->capture_default_str();
  app.add_option("--snapshot-after-events", settings.snapshot_after_events,
                 "2, 3: [snapshots] after_events")
      ->capture_default_str();
  app.add_option("--heartbeat-ms", settings.heartbeat_ms, "[cluster] heartbeat_ms")
      ->capture_default_str();
  app.add_option("--takeover-ms", settings.takeover_ms, "[cluster] takeover_ms")
      ->capture_default_str();
  app.add_option("--pair-vertices", settings.pair_vertices, "3: each pool's size")
      ->capture_default_str();
  app.add_option("--pair-events", settings.pair_events, "3: events per pool")
      ->capture_default_str();
  app.add_flag("--keep", keep, "Keep the work directory (configs, daemon logs)");
  app.add_flag("--quick", quick, "Small sizes: a smoke run of every section");
  CLI11_PARSE(app, argc, argv);
  if (quick) {
    settings.ingest_vertices = 2000;
    settings.ingest_events = 10000;
    settings.rate = 5000;
    settings.latency_seconds = 1;
    settings.takeover_vertices = 2000;
    settings.takeover_events = 10000;
    settings.snapshot_after_events = 5000;
    // heartbeat_ms and takeover_ms stay the defaults: a busy owner on a loaded CI machine is
    // not taken for dead.
    settings.pair_vertices = 1000;
    settings.pair_events = 5000;
  }
  const yoke::cluster::NatsLibrary library;
  try {
    return yoke::bench::run(settings, std::set<std::string>(chosen.begin(), chosen.end()), keep);
  } catch (const std::exception& error) {
    std::fprintf(stderr, "yoke_cluster_bench: %s\n", error.what());
    return 1;
  }
}
