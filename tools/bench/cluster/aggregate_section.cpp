// Section 3: two pools fed at once by two clients (one per pool, same batches, same number in
// flight), served by one yoked instance that owns both, then by two instances that own one
// each; both on the JetStream backend, each run on a stream of its own. The aggregate rate is
// all events over the time until both clients are done.
#include <chrono>
#include <cstdio>
#include <exception>
#include <thread>

#include "cluster_sections.h"
#include "tools/bench/cluster/yoked_configs.h"
#include "tools/bench/machine_facts.h"
#include "tools/bench/daemon/yoked_process.h"

namespace yoke::bench {
namespace {

struct PairResult {
  double seconds = 0;
  std::size_t events = 0;
  LoadResult pools[2];
  double events_per_second() const { return seconds > 0 ? static_cast<double>(events) / seconds : 0; }
};

// Both pools' base graphs, then both streams at once, pool p sent to ingest[p].
PairResult feed_pair(BenchContext& run, const PoolBatches (&pools)[2], const std::string (&ingest)[2]) {
  for (int p = 0; p < 2; ++p) load_base(run.zmq, ingest[p], pools[p]);
  PairResult result;
  std::exception_ptr failures[2];
  const auto start = std::chrono::steady_clock::now();
  std::thread clients[2];
  for (int p = 0; p < 2; ++p) {
    clients[p] = std::thread([&, p] {
      try {
        result.pools[p] = send_pipelined(run.zmq, ingest[p], pools[p].batches, pools[p].base_count,
                                         pools[p].batches.size(), run.settings.in_flight);
      } catch (...) {
        failures[p] = std::current_exception();
      }
    });
  }
  for (std::thread& client : clients) client.join();
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  for (int p = 0; p < 2; ++p) {
    if (failures[p]) std::rethrow_exception(failures[p]);
    result.events += result.pools[p].events;
  }
  return result;
}

InstallationPlan pair_plan(BenchContext& run, const std::string& stream) {
  InstallationPlan plan;
  plan.servers = run.nats_servers;
  plan.stream = stream;
  plan.heartbeat_ms = run.settings.heartbeat_ms;
  plan.takeover_ms = run.settings.takeover_ms;
  return plan;
}

}  // namespace

void run_aggregate_section(BenchContext& run) {
  const ClusterBenchSettings& settings = run.settings;
  const std::string names[2] = {"north", "south"};
  const PoolBatches pools[2] = {
      draw_pool(settings.pair_vertices, settings.pair_events, settings.batch, settings.base_chunk,
                11, names[0], "pair-north"),
      draw_pool(settings.pair_vertices, settings.pair_events, settings.batch, settings.base_chunk,
                12, names[1], "pair-south")};
  DaemonKnobs knobs;
  knobs.snapshot_after_events = settings.snapshot_after_events;

  PairResult one;
  {
    InstallationPlan plan = pair_plan(run, "bench-one");
    plan.instances.push_back({"solo", free_loopback_endpoints(), {names[0], names[1]}, {}});
    const std::filesystem::path dir = run.work / "aggregate-one";
    std::filesystem::create_directories(dir);
    write_instance_config(dir / "yoked.toml", plan, "solo", knobs);
    YokedProcess solo(settings.yoked, dir / "data", dir / "yoked.toml");
    solo.wait_ready(run.zmq, plan.instances[0].endpoints.query, std::chrono::seconds(60));
    for (const std::string& name : names) {
      solo.wait_serving(run.zmq, plan.instances[0].endpoints.query, name, std::chrono::seconds(60));
    }
    const std::string ingest[2] = {plan.instances[0].endpoints.ingest,
                                   plan.instances[0].endpoints.ingest};
    one = feed_pair(run, pools, ingest);
    solo.stop(false);
  }
  PairResult two;
  {
    InstallationPlan plan = pair_plan(run, "bench-two");
    for (const std::string& name : names) {
      plan.instances.push_back({name, free_loopback_endpoints(), {name}, {}});
    }
    const std::filesystem::path dir = run.work / "aggregate-two";
    for (const InstancePlan& instance : plan.instances) {
      std::filesystem::create_directories(dir / instance.name);
      write_instance_config(dir / instance.name / "yoked.toml", plan, instance.name, knobs);
    }
    YokedProcess north(settings.yoked, dir / "north" / "data", dir / "north" / "yoked.toml");
    YokedProcess south(settings.yoked, dir / "south" / "data", dir / "south" / "yoked.toml");
    north.wait_ready(run.zmq, plan.instances[0].endpoints.query, std::chrono::seconds(60));
    south.wait_ready(run.zmq, plan.instances[1].endpoints.query, std::chrono::seconds(60));
    north.wait_serving(run.zmq, plan.instances[0].endpoints.query, names[0], std::chrono::seconds(60));
    south.wait_serving(run.zmq, plan.instances[1].endpoints.query, names[1], std::chrono::seconds(60));
    const std::string ingest[2] = {plan.instances[0].endpoints.ingest,
                                   plan.instances[1].endpoints.ingest};
    two = feed_pair(run, pools, ingest);
    north.stop(false);
    south.stop(false);
  }

  std::printf("3. aggregate: two city pools of %zu vertices, %zu events each in batches of %zu, "
              "one client per pool (%zu in flight), at once\n",
              settings.pair_vertices, one.pools[0].events, settings.batch, settings.in_flight);
  std::printf("                                   events/s  vs one    %s    %s\n", "north events/s",
              "south events/s");
  std::printf("   one instance owning both    %12.0f  %7.3f    %14.0f    %14.0f\n",
              one.events_per_second(), 1.0, one.pools[0].events_per_second(),
              one.pools[1].events_per_second());
  std::printf("   two instances, one each     %12.0f  %7.3f    %14.0f    %14.0f\n",
              two.events_per_second(), two.events_per_second() / std::max(one.events_per_second(), 1.0),
              two.pools[0].events_per_second(), two.pools[1].events_per_second());
  std::printf("   (%ld usable CPUs for the client, the daemons and three nats-server nodes)\n\n",
              usable_cpus());
  std::fflush(stdout);
}

}  // namespace yoke::bench
