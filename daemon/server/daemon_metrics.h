// What yoked reports on GET /metrics: counters and histograms updated as work happens, and
// per-pool gauges read from the service when the page is rendered.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <map>
#include <string>

#include "daemon/metrics/metrics_registry.h"
#include "daemon/service/pool_service.h"

namespace yoke::daemon {

class DaemonMetrics {
 public:
  DaemonMetrics();

  void ingest_message() { ingest_messages_->add(); }
  void acknowledged(const v1::Ack& ack);
  void query(const std::string& kind) { registry_.counter(kQueries, kQueriesHelp, {{"kind", kind}}).add(); }
  void journal_synced(std::chrono::nanoseconds took, std::size_t batches);
  void committed(const v1::Diff& diff);
  void published(std::chrono::nanoseconds commit_to_publish);
  void snapshot_written(std::chrono::nanoseconds took);
  // Drops every series labelled with the retired pool: names that come and go must not grow
  // the page (or the daemon) for ever. O(total series).
  void pool_retired(const std::string& pool) {
    batches_by_pool_.erase(pool);  // its counters are among the series that go
    registry_.forget_series("pool", pool);
  }

  // The page, with the pools' gauges refreshed from `service` first.
  std::string render(PoolService& service, std::chrono::steady_clock::duration uptime);

 private:
  static constexpr const char* kQueries = "yoke_queries_total";
  static constexpr const char* kQueriesHelp = "Query socket requests by kind.";

  // A pool's counters of accepted batches, each found in the registry once: its look-up
  // (labels built, names checked, label sets compared) is a few microseconds, and every batch
  // is acknowledged on the loop thread.
  struct BatchCounters {
    metrics::Counter* accepted = nullptr;
    metrics::Counter* duplicate = nullptr;
  };
  metrics::Counter& batches_counter(const std::string& pool, bool duplicate);

  metrics::Registry registry_;
  metrics::Counter* ingest_messages_;
  metrics::Counter* journal_syncs_;
  metrics::Counter* journal_records_;
  metrics::Histogram* journal_sync_seconds_;
  metrics::Histogram* commit_to_publish_seconds_;
  metrics::Counter* snapshots_;
  metrics::Gauge* snapshot_seconds_;
  metrics::Gauge* uptime_seconds_;
  std::map<std::string, BatchCounters, std::less<>> batches_by_pool_;
};

}  // namespace yoke::daemon
