#include "pool_scaling.h"

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <ctime>
#include <fstream>
#include <future>
#include <latch>
#include <map>
#include <sstream>
#include <memory>
#include <stdexcept>
#include <string>
#include <thread>
#include <utility>
#include <vector>

#include "engine_ceiling.h"
#include "ingest_load.h"
#include "tools/bench/machine_facts.h"
#include "yoke/pool.h"
#include "yoke/v1/query.pb.h"

namespace yoke::bench {
namespace {

using Clock = std::chrono::steady_clock;

// A pool's city stream: its base graph first, then batches of `settings.batch` events.
CityStream city_stream(const PoolScalingSettings& settings, std::size_t vertices,
                       std::size_t events, std::uint64_t seed) {
  return CityStream{vertices, events, settings.batch, settings.mix, seed};
}

Batches pool_batches(const PoolScalingSettings& settings, std::size_t vertices,
                     std::size_t events, std::uint64_t seed) {
  return city_batches(city_stream(settings, vertices, events, seed));
}

std::vector<EncodedBatch> pool_stream(const PoolScalingSettings& settings, std::size_t vertices,
                                      std::size_t events, std::uint64_t seed,
                                      const std::string& pool) {
  return encode_batches(pool_batches(settings, vertices, events, seed), "scaling-" + pool, pool,
                        1);
}

double thread_cpu_seconds() {
  timespec now{};
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &now);
  return static_cast<double>(now.tv_sec) + static_cast<double>(now.tv_nsec) * 1e-9;
}

// The repairs alone, with no daemon around them: each pool's stream committed in this process
// by a thread of its own, all pools at once, in commits of `per_commit` events (the size the
// daemon's repairs had). How its rate grows with the pool count is what this machine's cores
// give the engine's work: the ceiling for the daemon's ratio (shared caches, memory, and a
// vCPU that may be a hyperthread all count in it). Events per second of wall time, and the
// threads' CPU time per event.
EngineRun engine_events_per_second(const std::vector<Batches>& streams, std::size_t per_commit) {
  std::vector<std::unique_ptr<Pool>> pools;
  std::vector<Batches> commits;
  std::size_t events = 0;
  for (const Batches& stream : streams) {
    pools.push_back(std::make_unique<Pool>(Mode::max_weight));
    pools.back()->commit(stream.front());  // the base graph, before the clock
    commits.push_back(commits_of(stream, per_commit));
    for (const std::vector<Event>& commit : commits.back()) events += commit.size();
  }
  std::latch start(static_cast<std::ptrdiff_t>(pools.size()) + 1);
  std::vector<std::thread> threads;
  std::vector<double> cpu_seconds(pools.size(), 0);
  for (std::size_t i = 0; i < pools.size(); ++i) {
    threads.emplace_back([&, i] {
      start.arrive_and_wait();
      const double before = thread_cpu_seconds();
      for (const std::vector<Event>& commit : commits[i]) pools[i]->commit(commit);
      cpu_seconds[i] = thread_cpu_seconds() - before;
    });
  }
  start.arrive_and_wait();
  const Clock::time_point began = Clock::now();
  for (std::thread& thread : threads) thread.join();
  const double seconds = std::chrono::duration<double>(Clock::now() - began).count();
  double cpu = 0;
  for (const double thread : cpu_seconds) cpu += thread;
  return EngineRun{static_cast<double>(events) / seconds,
                   cpu * 1e6 / static_cast<double>(std::max<std::size_t>(events, 1))};
}

// Sends `request` about `pool` on a query socket and waits for the reply (the daemon holds a
// query about a pool while that pool repairs). Throws when none comes or it does not parse.
v1::QueryReply ask_and_wait(zmq::context_t& context, const std::string& endpoint,
                            v1::QueryRequest request, const std::string& pool) {
  zmq::socket_t socket(context, zmq::socket_type::dealer);
  socket.set(zmq::sockopt::linger, 0);
  socket.set(zmq::sockopt::rcvtimeo, 120000);
  socket.connect(endpoint);
  request.set_version(1);
  request.set_pool(pool);
  socket.send(zmq::buffer(request.SerializeAsString()), zmq::send_flags::none);
  zmq::message_t answer;
  v1::QueryReply reply;
  if (!socket.recv(answer) || !reply.ParseFromArray(answer.data(), static_cast<int>(answer.size()))) {
    throw std::runtime_error("no answer about pool " + pool);
  }
  return reply;
}

// `pool`'s stats, once its repairs in flight are done.
v1::Stats pool_stats(zmq::context_t& context, const std::string& endpoint,
                     const std::string& pool) {
  v1::QueryRequest request;
  request.mutable_stats();
  const v1::QueryReply reply = ask_and_wait(context, endpoint, std::move(request), pool);
  if (!reply.has_stats()) throw std::runtime_error("no stats about pool " + pool);
  return reply.stats();
}

// Returns once `pool`'s repairs in flight are done (its summary answered).
void await_summary(zmq::context_t& context, const std::string& endpoint, const std::string& pool) {
  v1::QueryRequest request;
  request.mutable_summary();
  ask_and_wait(context, endpoint, std::move(request), pool);
}

// CPU time (seconds) a process's threads have run: its main thread (yoked's loop) apart; and
// each thread's time and context switches by thread name (several threads of a name summed).
struct ThreadCpu {
  double seconds = 0;
  double switches = 0;  // voluntary and involuntary
  double faults = 0;    // minor page faults (fresh pages the kernel zeroes)
  int threads = 0;
};

struct ProcessCpu {
  double main_thread = 0;
  double other_threads = 0;
  std::map<std::string, ThreadCpu> by_name;
};

// Field `index` (1-based, as proc(5) counts) of a /proc stat file (0 when absent).
double stat_field(const std::filesystem::path& stat, int index) {
  std::string line;
  std::getline(std::ifstream(stat), line);
  const std::size_t comm_end = line.rfind(')');  // a thread name may hold spaces
  if (comm_end == std::string::npos) return 0;
  std::istringstream fields(line.substr(comm_end + 1));
  std::string field;
  for (int i = 3; i <= index && fields >> field; ++i) {
    if (i == index) return std::strtod(field.c_str(), nullptr);
  }
  return 0;
}

// A number after `label` in a /proc status file (0 when absent).
double status_field(const std::filesystem::path& status, const std::string& label) {
  std::ifstream in(status);
  std::string line;
  while (std::getline(in, line)) {
    if (line.starts_with(label)) return std::strtod(line.c_str() + label.size(), nullptr);
  }
  return 0;
}

ProcessCpu process_cpu(pid_t pid) {
  ProcessCpu cpu;
  const std::filesystem::path tasks = "/proc/" + std::to_string(pid) + "/task";
  std::error_code error;
  for (const auto& task : std::filesystem::directory_iterator(tasks, error)) {
    std::ifstream schedstat(task.path() / "schedstat");
    double ns = 0;  // first field: time on a CPU, in nanoseconds
    if (!(schedstat >> ns)) continue;
    (task.path().filename() == std::to_string(pid) ? cpu.main_thread : cpu.other_threads) +=
        ns * 1e-9;
    std::string name;
    std::getline(std::ifstream(task.path() / "comm"), name);
    ThreadCpu& thread = cpu.by_name[name];
    thread.seconds += ns * 1e-9;
    thread.switches += status_field(task.path() / "status", "voluntary_ctxt_switches:") +
                       status_field(task.path() / "status", "nonvoluntary_ctxt_switches:");
    thread.faults += stat_field(task.path() / "stat", 10);  // minflt
    ++thread.threads;
  }
  return cpu;
}

double own_cpu_seconds() {
  timespec now{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &now);
  return static_cast<double>(now.tv_sec) + static_cast<double>(now.tv_nsec) * 1e-9;
}

struct ScalingRun {
  double events_per_second = 0;
  // CPU microseconds per event over the timed part: yoked's loop thread, its other threads
  // (repair workers, ZeroMQ, snapshots), and this process (the clients).
  double loop_us = 0, workers_us = 0, clients_us = 0;
  double events_per_commit = 0;  // the repairs' size: the engine's cost per event falls with it
  // yoked's threads by name over the timed part: CPU us per event, switches per 1000 events.
  std::map<std::string, ThreadCpu> threads;
};

// Events per second of `pools` pools fed at once by one pipelined client each.
ScalingRun pools_at_once(zmq::context_t& context, const PoolScalingSettings& settings,
                         const std::vector<Batches>& raw_streams) {
  const std::size_t pools = raw_streams.size();
  const YokedEndpoints endpoints = free_loopback_endpoints();
  const std::filesystem::path config = settings.work / "scaling.toml";
  settings.write_config(config, endpoints);
  std::vector<std::vector<EncodedBatch>> streams;
  for (std::size_t i = 0; i < pools; ++i) {
    const std::string pool = "pool-" + std::to_string(i);
    streams.push_back(encode_batches(raw_streams[i], "scaling-" + pool, pool, 1));
  }
  YokedProcess daemon(settings.yoked, settings.work / ("scaling-" + std::to_string(pools)), config);
  daemon.wait_ready(context, endpoints.query, std::chrono::seconds(60));
  for (const auto& stream : streams) send_pipelined(context, endpoints.ingest, stream, 0, 1, 1);
  // An ack comes once a window is durable, before its repair: the clock starts when every
  // base graph is repaired (a summary query waits for its pool's repair), so that the timed
  // part is the stream's repairs alone and not N base graphs sharing the cores.
  std::uint64_t commits_before = 0;
  for (std::size_t i = 0; i < pools; ++i) {
    commits_before += pool_stats(context, endpoints.query, "pool-" + std::to_string(i)).commits();
  }

  const std::size_t in_flight = settings.in_flight_per_pool
                                    ? settings.in_flight
                                    : std::max<std::size_t>(1, settings.in_flight / pools);
  const ProcessCpu daemon_before = process_cpu(daemon.pid());
  const double clients_before = own_cpu_seconds();
  const Clock::time_point start = Clock::now();
  std::vector<std::future<LoadResult>> clients;
  for (const auto& stream : streams) {
    clients.push_back(std::async(std::launch::async, [&context, &endpoints, &stream, in_flight] {
      return send_pipelined(context, endpoints.ingest, stream, 1, stream.size(), in_flight);
    }));
  }
  std::size_t events = 0;
  for (auto& client : clients) events += client.get().events;
  // The last ack comes before the last repairs: the clock stops when every pool's stats
  // answer, which waits for that pool's repairs, so the rate is of repaired events.
  std::uint64_t commits = 0;
  for (std::size_t i = 0; i < pools; ++i) {
    commits += pool_stats(context, endpoints.query, "pool-" + std::to_string(i)).commits();
  }
  const double seconds = std::chrono::duration<double>(Clock::now() - start).count();
  const ProcessCpu daemon_after = process_cpu(daemon.pid());
  const double clients_after = own_cpu_seconds();
  daemon.stop(false);
  const double per_event = 1e6 / static_cast<double>(std::max<std::size_t>(events, 1));
  ScalingRun run;
  run.events_per_second = static_cast<double>(events) / seconds;
  run.loop_us = (daemon_after.main_thread - daemon_before.main_thread) * per_event;
  run.workers_us = (daemon_after.other_threads - daemon_before.other_threads) * per_event;
  run.clients_us = (clients_after - clients_before) * per_event;
  for (const auto& [name, after] : daemon_after.by_name) {
    const auto before = daemon_before.by_name.find(name);
    const ThreadCpu earlier = before == daemon_before.by_name.end() ? ThreadCpu{} : before->second;
    run.threads[name] = {(after.seconds - earlier.seconds) * per_event,
                         (after.switches - earlier.switches) * per_event * 1e-3,
                         (after.faults - earlier.faults) * per_event * 1e-3, after.threads};
  }
  run.events_per_commit = static_cast<double>(events) /
                          static_cast<double>(std::max<std::uint64_t>(commits - commits_before, 1));
  return run;
}

void print_percentiles(const char* what, const std::vector<double>& us) {
  std::printf("  %-40s p50 %8.0f us  p99 %8.0f us  max %8.0f us  (%zu)\n", what,
              percentile(us, 50), percentile(us, 99), percentile(us, 100), us.size());
}

}  // namespace

void run_pool_scaling(zmq::context_t& context, const PoolScalingSettings& settings) {
  std::printf("\nmulti-pool ingest: %zu events in all after each pool's base graph of %zu "
              "vertices, %zu in flight %s\n",
              settings.events, settings.vertices, settings.in_flight,
              settings.in_flight_per_pool ? "for each pool's client"
                                          : "shared by one client per pool");
  std::printf("  CPU us per event: yoked's loop thread, its other threads (repairs, ZeroMQ), "
              "the clients (this process); events per commit (repair) of a pool;\n"
              "  engine alone: the same streams committed in this process, a thread per pool, "
              "in commits of that size, no daemon;\n"
              "  machine ceiling: the same again, a process per pool (what independent "
              "processes get of this machine)\n");
  std::printf("  %-6s %11s %9s %7s %8s %8s %11s %13s %9s %9s\n", "pools", "events/s",
              "vs first", "loop", "workers", "clients", "per commit", "engine alone",
              "vs first", "of it");
  double first = 0;
  double engine_first = 0;
  double ceiling_first = 0;  // events/s of the first count's processes (machine ceiling)
  const std::string self = std::filesystem::read_symlink("/proc/self/exe").string();
  double strand_first = 0;  // events/s of one pool's repair thread at the first run's CPU
  for (const std::size_t pools : settings.pool_counts) {
    std::vector<Batches> streams;
    for (std::size_t i = 0; i < pools; ++i) {
      streams.push_back(pool_batches(settings, settings.vertices, settings.events / pools, 7 + i));
    }
    const ScalingRun run = pools_at_once(context, settings, streams);
    const auto per_commit = static_cast<std::size_t>(std::max(run.events_per_commit, 1.0));
    const EngineRun alone = engine_events_per_second(streams, per_commit);
    const double engine = alone.events_per_second;
    std::vector<CityStream> ceiling_streams;
    for (std::size_t i = 0; i < pools; ++i) {
      ceiling_streams.push_back(
          city_stream(settings, settings.vertices, settings.events / pools, 7 + i));
    }
    const EngineRun processes = processes_events_per_second(self, ceiling_streams, per_commit);
    const double ceiling = processes.events_per_second;
    if (ceiling_first == 0) ceiling_first = ceiling;
    const double ceiling_ratio = ceiling / std::max(ceiling_first, 1.0);
    if (first == 0) first = run.events_per_second;
    if (engine_first == 0) engine_first = engine;
    const double ratio = run.events_per_second / std::max(first, 1.0);
    const double engine_ratio = engine / std::max(engine_first, 1.0);
    std::printf("  %-6zu %11.0f %9.2f %7.2f %8.2f %8.2f %11.0f %13.0f %9.2f %8.0f%%\n", pools,
                run.events_per_second, ratio, run.loop_us, run.workers_us, run.clients_us,
                run.events_per_commit, engine, engine_ratio, 100 * ratio / engine_ratio);
    std::printf("         machine ceiling: these streams repaired by the engine alone in %zu "
                "process%s at once: %.0f events/s, %.2fx the first; the daemon's %.2fx is %.0f%% "
                "of it\n",
                pools, pools == 1 ? "" : "es", ceiling, ceiling_ratio, ratio,
                100 * ratio / std::max(ceiling_ratio, 1e-9));
    // The engine's own CPU per event beside the repair workers': what the workers spend above
    // it is the daemon's (staging, diffs, captures, and what the other threads cost them).
    std::printf("         repairs' CPU us/event: yoked's workers %.3f; engine alone, threads %.3f, "
                "processes %.3f\n",
                run.threads.contains("yoked-repair") ? run.threads.at("yoked-repair").seconds : 0.0,
                alone.cpu_us, processes.cpu_us);
    std::printf("         yoked's threads, CPU us/event (context switches, minor faults per 1000 "
                "events):");
    for (const auto& [name, thread] : run.threads) {
      std::printf(" %s x%d %.3f (%.1f, %.1f)", name.c_str(), thread.threads, thread.seconds,
                  thread.switches, thread.faults);
    }
    std::printf("\n");
    // How many cores the run kept busy, and the rate this CPU per event would reach with every
    // usable core busy: a run near that bound is held by CPU per event, not by waiting. Against
    // the first run's strand bound (one pool's repairs on one thread, at their CPU per event),
    // that is the ratio idle cores would give: read from CPU times, it holds under other load.
    const double total_us = run.loop_us + run.workers_us + run.clients_us;
    const double cpus = static_cast<double>(std::max(usable_cpus(), 1L));
    const double all_busy = cpus * 1e6 / std::max(total_us, 1e-9);
    const auto repairs = run.threads.find("yoked-repair");
    if (strand_first == 0 && repairs != run.threads.end()) {
      strand_first = 1e6 / std::max(repairs->second.seconds, 1e-9);
    }
    std::printf("         cores busy: yoked %.2f, clients %.2f (of %.0f); all %.0f busy at this CPU "
                "per event: %.0f events/s, %.2fx the first run's strand bound\n",
                (run.loop_us + run.workers_us) * run.events_per_second * 1e-6,
                run.clients_us * run.events_per_second * 1e-6, cpus, cpus, all_busy,
                all_busy / std::max(strand_first, 1.0));
  }
}

void run_long_repair(zmq::context_t& context, const PoolScalingSettings& settings) {
  const YokedEndpoints endpoints = free_loopback_endpoints();
  const std::filesystem::path config = settings.work / "long-repair.toml";
  settings.write_config(config, endpoints);
  if (!settings.snapshots) std::ofstream(config, std::ios::app) << "[snapshots]\nafter_events = 0\n";
  const std::size_t paced_events = static_cast<std::size_t>(settings.rate * settings.seconds);
  const std::vector<EncodedBatch> quick =
      pool_stream(settings, settings.vertices, 2 * paced_events, 11, "quick");
  // Paced from the slow pool's acknowledgement on: it overlaps the repair alone.
  const std::vector<EncodedBatch> during =
      pool_stream(settings, settings.vertices, paced_events / 4, 13, "during");
  const std::vector<EncodedBatch> slow = pool_stream(settings, settings.slow_vertices, 0, 12, "slow");
  YokedProcess daemon(settings.yoked, settings.work / "long-repair", config);
  daemon.wait_ready(context, endpoints.query, std::chrono::seconds(60));
  send_pipelined(context, endpoints.ingest, quick, 0, 1, 1);
  send_pipelined(context, endpoints.ingest, during, 0, 1, 1);
  // "Alone" means alone: the two base graphs' repairs (acknowledged before they ran) are over.
  await_summary(context, endpoints.query, "quick");
  await_summary(context, endpoints.query, "during");
  const double per_second = settings.rate / static_cast<double>(settings.batch);
  const std::size_t half = 1 + (quick.size() - 1) / 2;

  // Alone, then with the slow pool's base graph sent a quarter of the way in.
  const LoadResult alone = send_paced(context, endpoints.ingest, quick, 1, half, per_second);
  std::future<LoadResult> paced = std::async(std::launch::async, [&] {
    return send_paced(context, endpoints.ingest, quick, half, quick.size(), per_second);
  });
  std::this_thread::sleep_for(std::chrono::duration<double>(settings.seconds / 4));
  const LoadResult slow_ack = send_pipelined(context, endpoints.ingest, slow, 0, 1, 1);
  const Clock::time_point acked = Clock::now();
  std::future<LoadResult> in_repair = std::async(std::launch::async, [&] {
    return send_paced(context, endpoints.ingest, during, 1, during.size(), per_second);
  });
  await_summary(context, endpoints.query, "slow");
  const double held = std::chrono::duration<double>(Clock::now() - acked).count();
  const LoadResult beside = paced.get();
  const LoadResult repair_only = in_repair.get();
  daemon.stop(false);

  std::printf("\none pool's long repair vs other pools' acknowledgements (pools of %zu vertices "
              "paced at %.0f events/s each; snapshots %s):\n",
              settings.vertices, settings.rate,
              settings.snapshots ? "after 2x10^5 events, as by default" : "off");
  print_percentiles("quick send to ack, alone", alone.latency_us);
  print_percentiles("quick, beside slow's ingest and repair", beside.latency_us);
  print_percentiles("during, sent from slow's ack on", repair_only.latency_us);
  std::printf("  pool \"slow\": base graph of %zu events acknowledged in %.2f s, then repairing "
              "for %.2f s (ack to its query's answer); \"during\" paced for %.2f s of it\n",
              slow_ack.events, slow_ack.seconds, held, repair_only.seconds);
}

}  // namespace yoke::bench
