// yoke_loop_probe: the daemon loop's work on a multi-pool ingest, without sockets or threads,
// in a fixed order, so that an instruction count (callgrind) of it is the same from run to run
// and compares two builds. Each pool gets a city stream (the daemon benchmark's: base graph,
// then batches of --batch events) offered to a PoolService in turn, pool by pool; a window is
// sealed every --window events (begin_seal, the journal's commit with durability none,
// end_seal, start_apply). The repairs are deferred as on a busy daemon: a window's stage and
// repair run once the next window's first batch of each pool has arrived (and was held for
// them), then finish_repairs() collects them and offers the held batches. The functions to
// count: PoolService::offer/begin_seal/end_seal/start_apply/finish_repairs (the loop; the
// repairs run inside run_repairs(), subtract it) and commit_window (the journal thread's).
//   valgrind --tool=callgrind build/tools/bench/yoke_loop_probe
//   callgrind_annotate --inclusive=yes callgrind.out.PID | grep -E 'PoolService::|run_repairs|commit_window'
#include <cstdio>
#include <deque>
#include <filesystem>
#include <functional>
#include <string>
#include <utility>
#include <vector>

#include <CLI/CLI.hpp>

#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/pool_service.h"
#include "daemon/service/recovery.h"
#include "ingest_load.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::bench {
namespace {

// Runs the tasks handed to it only when told (run_repairs()), in the order given.
class DeferredRepairs final : public daemon::RepairExecutor {
 public:
  void run(const std::string& /*pool*/, std::function<void()> task) override {
    tasks_.push_back(std::move(task));
  }
  std::size_t queued() const { return tasks_.size(); }
  // Not inlined, so that an instruction count can subtract the repairs.
  [[gnu::noinline]] void run_repairs() {
    while (!tasks_.empty()) {
      std::function<void()> task = std::move(tasks_.front());
      tasks_.pop_front();
      task();
    }
  }

 private:
  std::deque<std::function<void()>> tasks_;
};

// The records of a sealed window, whole, committed: what yoked's journal thread does.
template <class Sealed>
[[gnu::noinline]] storage::CommittedWindow commit_window(storage::CommitLog& log, Sealed sealed) {
  if constexpr (requires { std::move(sealed).encode(); }) {
    return log.commit_encoded(std::move(sealed).encode());
  } else {
    return log.commit(std::move(sealed));
  }
}

struct Settings {
  std::size_t pools = 2;
  std::size_t vertices = 20000;
  std::size_t events = 200000;  // after the base graphs, shared among the pools
  std::size_t batch = 100;
  std::size_t window = 10000;
};

std::vector<EncodedBatch> pool_stream(const Settings& settings, std::size_t index) {
  gen::StreamSpec spec;
  spec.family = gen::StreamFamily::city;
  spec.vertices = settings.vertices;
  spec.events = settings.events / settings.pools;
  spec.batch_min = spec.batch_max = settings.batch;
  spec.mix = gen::parse_mix("bench");
  spec.seed = 7 + index;
  gen::EventStream stream(spec);
  std::vector<std::vector<Event>> batches;
  std::vector<Event> batch;
  while (stream.next_batch(batch)) batches.push_back(batch);
  const std::string pool = "probe-" + std::to_string(index);
  return encode_batches(batches, "client-" + pool, pool, 1);
}

int run(const Settings& settings) {
  std::vector<std::vector<EncodedBatch>> streams;
  for (std::size_t i = 0; i < settings.pools; ++i) streams.push_back(pool_stream(settings, i));
  const std::filesystem::path dir =
      std::filesystem::temp_directory_path() / ("yoke-loop-probe-" + std::to_string(::getpid()));
  daemon::DaemonConfig config;
  config.data_dir = dir;
  config.limits.max_message_bytes = std::uint64_t{1} << 28;
  config.limits.max_events_per_batch = std::uint64_t{1} << 24;
  config.batching.max_events = settings.window;
  journal::Options options;
  options.durability = journal::Durability::none;
  options.max_record_bytes = std::uint32_t{1} << 28;
  std::size_t acks = 0, events = 0;
  {
    auto log = journal::JournalCommitLog::open(dir / "journal", options);
    daemon::PoolService service(config, daemon::empty_service_state(config), *log);
    DeferredRepairs repairs;
    service.set_repair_executor(&repairs);
    daemon::Ticket ticket = 1;
    std::size_t in_window = 0, window_batches = 0;
    const auto close = [&] {
      auto sealed = service.begin_seal();
      acks += service.end_seal(commit_window(*log, std::move(sealed))).size();
      service.start_apply();
      in_window = 0;
      window_batches = 0;
    };
    // As yoked's loop does once it has published them: the diffs go back for later repairs.
    const auto collect = [&] {
      daemon::PoolService::RepairsDone done = service.finish_repairs();
      for (v1::Diff& diff : done.diffs) service.reuse_diff(std::move(diff));
      acks += done.replies.size();
    };
    std::size_t longest = 0;
    for (const auto& stream : streams) longest = std::max(longest, stream.size());
    for (std::size_t b = 0; b < longest; ++b) {
      for (const auto& stream : streams) {
        if (b >= stream.size()) continue;
        if (service.offer(ticket++, stream[b].bytes)) ++acks;
        in_window += stream[b].events;
        events += stream[b].events;
        if (++window_batches == settings.pools && repairs.queued() != 0) {
          repairs.run_repairs();  // the last window's, with the next window's first batches held
          collect();
        }
        if (in_window >= settings.window) close();
      }
    }
    close();
    repairs.run_repairs();
    collect();
    if (!service.window_empty()) close();
    repairs.run_repairs();
    collect();
  }
  std::error_code ignored;
  std::filesystem::remove_all(dir, ignored);
  std::printf("loop probe: %zu pools, %zu events (base graphs included), %zu replies of %zu batches\n",
              settings.pools, events, acks, static_cast<std::size_t>(0) + [&] {
                std::size_t n = 0;
                for (const auto& stream : streams) n += stream.size();
                return n;
              }());
  return 0;
}

}  // namespace
}  // namespace yoke::bench

int main(int argc, char** argv) {
  yoke::bench::Settings settings;
  CLI::App app("The daemon loop's work on a multi-pool ingest, in a fixed order", "yoke_loop_probe");
  app.add_option("--pools", settings.pools, "Pools")->capture_default_str();
  app.add_option("--vertices", settings.vertices, "Each pool's size")->capture_default_str();
  app.add_option("--events", settings.events, "Events after the base graphs, over all pools")
      ->capture_default_str();
  app.add_option("--batch", settings.batch, "Events per batch")->capture_default_str();
  app.add_option("--window", settings.window, "Events per window")->capture_default_str();
  CLI11_PARSE(app, argc, argv);
  return yoke::bench::run(settings);
}
