#include "daemon_metrics.h"

#include "daemon/service/batch_decoder.h"
#include "daemon/service/wire_types.h"

namespace yoke::daemon {
namespace {

// Latency buckets in seconds, 10 us to 10 s.
const std::vector<double> kLatencyBounds = {1e-5, 2.5e-5, 5e-5, 1e-4, 2.5e-4, 5e-4, 1e-3,
                                            2.5e-3, 5e-3, 1e-2, 2.5e-2, 5e-2, 0.1, 0.25,
                                            0.5, 1, 2.5, 5, 10};

double seconds(std::chrono::nanoseconds duration) {
  return std::chrono::duration<double>(duration).count();
}

}  // namespace

DaemonMetrics::DaemonMetrics()
    : ingest_messages_(&registry_.counter("yoke_ingest_messages_total",
                                          "Messages received on the ingest socket.")),
      journal_syncs_(&registry_.counter("yoke_journal_syncs_total",
                                        "Group commits: journal syncs, one per batching window.")),
      journal_records_(&registry_.counter("yoke_journal_records_total",
                                          "Journal records written, one per accepted batch.")),
      journal_sync_seconds_(&registry_.histogram(
          "yoke_journal_sync_seconds", "Time to write and sync one window's journal records.",
          kLatencyBounds)),
      commit_to_publish_seconds_(&registry_.histogram(
          "yoke_commit_to_publish_seconds",
          "From the close of a batching window to its diff handed to the publication socket.",
          kLatencyBounds)),
      snapshots_(&registry_.counter("yoke_snapshots_total", "Snapshots written.")),
      snapshot_seconds_(&registry_.gauge(
          "yoke_snapshot_last_duration_seconds",
          "How long the last snapshot took to capture and write, in seconds (0: none yet).")),
      uptime_seconds_(&registry_.gauge("yoke_uptime_seconds", "Seconds since the daemon started.")) {}

metrics::Counter& DaemonMetrics::batches_counter(const std::string& pool, bool duplicate) {
  auto found = batches_by_pool_.find(pool);
  if (found == batches_by_pool_.end()) found = batches_by_pool_.emplace(pool, BatchCounters{}).first;
  metrics::Counter*& counter = duplicate ? found->second.duplicate : found->second.accepted;
  if (counter == nullptr) {  // registered on first use, as before: no series of 0 appears
    counter = &registry_.counter("yoke_batches_total", "Batches acknowledged, by pool and outcome.",
                                 {{"pool", pool}, {"outcome", duplicate ? "duplicate" : "accepted"}});
  }
  return *counter;
}

void DaemonMetrics::acknowledged(const v1::Ack& ack) {
  if (ack.has_accepted()) {
    batches_counter(ack.pool(), ack.accepted().duplicate()).add();
    return;
  }
  if (ack.rejected().errors_size() == 0) return;
  // One count per refusal, by its first error's code; a message that was not read as a batch
  // is no rejected batch and has its own counter.
  const metrics::Labels code = {{"code", error_code_name(ack.rejected().errors(0).code())}};
  if (refuses_unread_message(ack)) {
    registry_
        .counter("yoke_ingest_messages_rejected_total",
                 "Ingest messages refused without being read as a batch (too large, not a "
                 "yoke.v1.IngestRequest batch, another protocol version, or during shutdown), "
                 "by error code.",
                 code)
        .add();
    return;
  }
  registry_
      .counter("yoke_batches_rejected_total",
               "Batches refused as a whole, by the code of their first error.", code)
      .add();
}

void DaemonMetrics::journal_synced(std::chrono::nanoseconds took, std::size_t batches) {
  journal_syncs_->add();
  journal_records_->add(batches);
  journal_sync_seconds_->observe(seconds(took));
}

void DaemonMetrics::committed(const v1::Diff& diff) {
  const metrics::Labels pool = {{"pool", diff.pool()}};
  registry_
      .counter("yoke_commits_total",
               "Commits: one repair of the pool for all its batches of a batching window.", pool)
      .add();
  registry_.counter("yoke_events_applied_total", "Events applied.", pool).add(diff.stats().events());
  registry_.counter("yoke_pairs_changed_total", "Pairs removed plus pairs added by commits.", pool)
      .add(static_cast<std::uint64_t>(diff.removed_size() + diff.added_size()));
  registry_
      .histogram("yoke_repair_seconds", "Time of one repair (the engine's commit).",
                 kLatencyBounds, pool)
      .observe(static_cast<double>(diff.timings().repair_us()) * 1e-6);
  registry_
      .counter("yoke_repair_vertices_touched_total",
               "Vertex visits by repairs: the size of the repaired regions.", pool)
      .add(diff.stats().vertices_touched());
}

void DaemonMetrics::published(std::chrono::nanoseconds commit_to_publish) {
  commit_to_publish_seconds_->observe(seconds(commit_to_publish));
}

void DaemonMetrics::snapshot_written(std::chrono::nanoseconds took) {
  snapshots_->add();
  snapshot_seconds_->set(seconds(took));
}

std::string DaemonMetrics::render(PoolService& service,
                                  std::chrono::steady_clock::duration uptime) {
  uptime_seconds_->set(std::chrono::duration<double>(uptime).count());
  for (const std::string& name : service.registry().names()) {
    const PoolProgress* progress = service.progress(name);
    const metrics::Labels labels = {{"pool", name}};
    registry_.gauge("yoke_pool_seq", "The pool's last applied batch.", labels)
        .set(progress ? progress->seq : 0);
    // A worker is repairing it: its gauges keep the values of its last repair.
    if (service.repairing(name)) continue;
    const Pool& pool = *service.registry().find(name);
    registry_.gauge("yoke_pool_vertices", "Vertices alive in the pool.", labels)
        .set(pool.vertex_count());
    registry_.gauge("yoke_pool_edges", "Edges alive in the pool.", labels).set(pool.edge_count());
    registry_.gauge("yoke_pool_pairs", "Pairs in the pool's matching.", labels).set(pool.pairs());
    registry_.gauge("yoke_pool_weight", "Total weight of the pool's matching.", labels)
        .set(pool.weight());
  }
  return registry_.render();
}

}  // namespace yoke::daemon
