// Section 2: a pool's owner SIGKILLed under load and its standby taking over. Two yoked
// instances on one stream: "east" owns the pool, "west" stands by for it (a warm replica).
// The pool is loaded and fed through east, east is killed with batches in flight, and the
// client resends the first batch it saw no acknowledgement for to west until west
// acknowledges it. The time from the kill to that acknowledgement is the client's takeover
// time; west's `pool_taken` line and east's heartbeats split it into parts.
#include <cstdio>
#include <thread>

#include "cluster_sections.h"
#include "tools/bench/cluster/takeover_probe.h"
#include "tools/bench/cluster/yoked_configs.h"
#include "tools/bench/daemon/yoked_process.h"
#include "yoke/v1/ingest.pb.h"

namespace yoke::bench {
namespace {

double seconds_between(WallClock::time_point from, WallClock::time_point to) {
  return std::chrono::duration<double>(to - from).count();
}

// Sends batches [begin, end) on one socket without waiting; returns the socket, whose
// acknowledgements are read after the kill.
zmq::socket_t send_burst(zmq::context_t& context, const std::string& endpoint,
                         const PoolBatches& pool, std::size_t begin, std::size_t end) {
  zmq::socket_t socket(context, zmq::socket_type::dealer);
  socket.set(zmq::sockopt::linger, 0);
  socket.connect(endpoint);
  for (std::size_t i = begin; i < end; ++i) {
    socket.send(zmq::buffer(pool.batches[i].bytes), zmq::send_flags::none);
  }
  return socket;
}

// The first batch of [begin, end) whose acknowledgement the socket does not hold (acks of
// one client's batches come in order).
std::size_t first_unacknowledged(zmq::socket_t& socket, const PoolBatches& pool,
                                 std::size_t begin, std::size_t end) {
  std::size_t next = begin;
  zmq::pollitem_t item{socket.handle(), 0, ZMQ_POLLIN, 0};
  while (next < end && zmq::poll(&item, 1, std::chrono::milliseconds(0)) > 0) {
    zmq::message_t message;
    (void)socket.recv(message);
    v1::IngestReply reply;
    if (reply.ParseFromArray(message.data(), static_cast<int>(message.size())) &&
        reply.ack().has_accepted() && reply.ack().client_batch() == pool.batches[next].number) {
      ++next;
    }
  }
  return next;
}

}  // namespace

void run_takeover_section(BenchContext& run) {
  const ClusterBenchSettings& settings = run.settings;
  const std::size_t after_kill = 200;  // batches sent to west after the takeover
  const PoolBatches pool =
      draw_pool(settings.takeover_vertices,
                settings.takeover_events + (settings.kill_in_flight + after_kill) * settings.batch,
                settings.batch, settings.base_chunk, 7, "city", "takeover");
  const std::size_t kill_at = pool.batches.size() - settings.kill_in_flight - after_kill;
  const std::size_t burst_end = kill_at + settings.kill_in_flight;

  const std::filesystem::path dir = run.work / "takeover";
  InstallationPlan plan;
  plan.servers = run.nats_servers;
  plan.stream = "bench-takeover";
  plan.heartbeat_ms = settings.heartbeat_ms;
  plan.takeover_ms = settings.takeover_ms;
  plan.instances.push_back({"east", free_loopback_endpoints(), {"city"}, {}});
  plan.instances.push_back({"west", free_loopback_endpoints(), {}, {"city"}});
  DaemonKnobs knobs;
  knobs.snapshot_after_events = settings.snapshot_after_events;
  for (const InstancePlan& instance : plan.instances) {
    std::filesystem::create_directories(dir / instance.name);
    write_instance_config(dir / instance.name / "yoked.toml", plan, instance.name, knobs);
  }
  const YokedEndpoints& east_at = plan.instances[0].endpoints;
  const YokedEndpoints& west_at = plan.instances[1].endpoints;

  BeatWatch east_beats(run.nats_servers, plan.stream + ".beat.east");
  YokedProcess east(settings.yoked, dir / "east" / "data", dir / "east" / "yoked.toml");
  east.wait_ready(run.zmq, east_at.query, std::chrono::seconds(60));
  YokedProcess west(settings.yoked, dir / "west" / "data", dir / "west" / "yoked.toml");
  west.wait_ready(run.zmq, west_at.query, std::chrono::seconds(60));
  east.wait_serving(run.zmq, east_at.query, "city", std::chrono::seconds(60));

  const auto load_start = std::chrono::steady_clock::now();
  const LoadResult base = load_base(run.zmq, east_at.ingest, pool);
  const LoadResult fed =
      send_pipelined(run.zmq, east_at.ingest, pool.batches, pool.base_count, kill_at, settings.in_flight);

  zmq::socket_t burst = send_burst(run.zmq, east_at.ingest, pool, kill_at, burst_end);
  std::this_thread::sleep_for(std::chrono::milliseconds(2));  // some of the burst is committed
  const WallClock::time_point killed_wall = WallClock::now();
  const auto killed = std::chrono::steady_clock::now();
  east.stop(true);
  const std::size_t resend_from = first_unacknowledged(burst, pool, kill_at, burst_end);
  const std::optional<WallClock::time_point> last_beat = east_beats.last_beat();
  const std::uint64_t beats_heard = east_beats.beats();
  const double owner_seconds = std::chrono::duration<double>(killed - load_start).count();

  const ResendResult resent =
      resend_until_acknowledged(run.zmq, west_at.ingest, pool.batches[resend_from],
                                std::chrono::milliseconds(20), std::chrono::seconds(120));
  const double kill_to_ack = std::chrono::duration<double>(resent.acknowledged - killed).count();
  if (resent.seq != pool.batches[resend_from].number) {
    throw std::runtime_error("the resent batch " + std::to_string(pool.batches[resend_from].number) +
                             " was acknowledged at seq " + std::to_string(resent.seq) +
                             ": batches were lost or applied twice");
  }
  // The rest of the stream through the new owner: every batch at its own seq.
  const LoadResult rest = send_pipelined(run.zmq, west_at.ingest, pool.batches, resend_from + 1,
                                         pool.batches.size(), settings.in_flight);
  const std::optional<TakeoverRecord> taken = read_takeover(dir / "west" / "yoked.log", "city");
  west.stop(false);
  if (!taken) throw std::runtime_error("west logged no pool_taken for the pool; see its yoked.log");

  std::printf("2. takeover: city pool of %zu vertices, %zu events through the owner (base graph "
              "in %.2f s, then %.0f events/s), snapshots every %llu events;\n"
              "   owner SIGKILLed with %zu batches sent, %zu of them acknowledged; heartbeat_ms %d, "
              "takeover_ms %d\n",
              settings.takeover_vertices, pool.base_events + fed.events, base.seconds,
              fed.events_per_second(), static_cast<unsigned long long>(settings.snapshot_after_events),
              settings.kill_in_flight, resend_from - kill_at, settings.heartbeat_ms,
              settings.takeover_ms);
  std::printf("   kill -> standby acknowledges the resent batch (client)  %7.3f s   target < 5 s: %s\n",
              kill_to_ack, kill_to_ack < 5 ? "met" : "missed");
  const double kill_to_taken = seconds_between(killed_wall, taken->logged);
  if (last_beat) {
    const double silence = static_cast<double>(taken->silent_ms) / 1000;
    std::printf("     owner's last beat heard, before the kill               %7.3f s\n",
                seconds_between(*last_beat, killed_wall));
    std::printf("     detection: owner silent when the standby claimed       %7.3f s   (from its last beat)\n",
                silence);
    std::printf("     claim + catch-up + adopt (standby's pool_taken line)  %7.3f s\n",
                seconds_between(*last_beat, taken->logged) - silence);
  }
  std::printf("     kill -> pool served by the standby                     %7.3f s\n", kill_to_taken);
  std::printf("     pool served -> client's acknowledgement                %7.3f s   (%d NOT_OWNER, %d "
              "unanswered tries, resend every 20 ms)\n",
              kill_to_ack - kill_to_taken, resent.not_owner, resent.silent);
  std::printf("   resent batch %llu acknowledged at seq %llu%s; %zu more batches through the new owner at "
              "%.0f events/s\n",
              static_cast<unsigned long long>(pool.batches[resend_from].number),
              static_cast<unsigned long long>(resent.seq), resent.duplicate ? " (duplicate)" : "",
              rest.batches, rest.events_per_second());
  std::printf("   owner's beats heard while it was loaded: %llu in %.1f s (%.0f expected at "
              "heartbeat_ms)\n\n",
              static_cast<unsigned long long>(beats_heard), owner_seconds,
              owner_seconds * 1000 / settings.heartbeat_ms);
  std::fflush(stdout);
}

}  // namespace yoke::bench
