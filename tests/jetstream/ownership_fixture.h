// The cluster tests of pool ownership: one local three-node cluster per suite
// (tools/nats_cluster), a fresh R3 stream and subject prefix per test, and helpers that read
// what every reader of the log sees.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <thread>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/storage/commit_log.h"
#include "daemon/storage/storage_error.h"
#include "tests/cluster/cluster_test_util.h"

namespace yoke::jetstream::testing {

inline v1::JournalRecord record(const std::string& pool, std::uint64_t seq,
                                const std::string& writer) {
  v1::JournalRecord r;
  r.set_pool(pool);
  r.set_seq(seq);
  r.set_client_id(writer);
  return r;
}

inline v1::Owner owner(const std::string& instance) {
  v1::Owner o;
  o.set_instance(instance);
  o.set_ingest("tcp://127.0.0.1:7410/" + instance);
  o.set_query("tcp://127.0.0.1:7412/" + instance);
  o.set_publish("tcp://127.0.0.1:7411/" + instance);
  return o;
}

// What one reading returns: "pool:seq:writer" per record, and how many groups it skipped.
struct Reading {
  std::vector<std::string> records;
  std::uint64_t skipped = 0;
};

inline Reading read_all(storage::CommitLogView& log, storage::Position from,
                        std::string_view pool) {
  Reading reading;
  const std::unique_ptr<storage::GroupReader> reader = log.read_from(from, pool);
  while (auto group = reader->next()) {
    for (const v1::JournalRecord& r : group->records) {
      reading.records.push_back(r.pool() + ":" + std::to_string(r.seq()) + ":" + r.client_id());
    }
  }
  reading.skipped = reader->skipped();
  return reading;
}

// Retries `action` while the log cannot be reached (an election after a node died), at most
// `limit`; the last error is rethrown.
template <typename Action>
auto until_reachable(Action&& action,
                     std::chrono::milliseconds limit = std::chrono::milliseconds(30000)) {
  const auto deadline = std::chrono::steady_clock::now() + limit;
  for (;;) {
    try {
      return action();
    } catch (const storage::LogDamage&) {
      throw;
    } catch (const storage::LogError&) {
      if (std::chrono::steady_clock::now() > deadline) throw;
      std::this_thread::sleep_for(std::chrono::milliseconds(100));
    }
  }
}

class OwnershipOnCluster : public cluster::testing::OneClusterPerSuite<OwnershipOnCluster> {
 protected:
  OwnershipOnCluster() {
    const int test = next_test_++;
    settings_.stream = "owners-" + std::to_string(test);
    settings_.subject_prefix = std::string("o").append(std::to_string(test)).append(".yoke");
    settings_.replicas = 3;
    settings_.max_bytes = 32 << 20;
  }
  // A second daemon's own connection to the cluster, its API requests answered within
  // `api_timeout` or failed.
  static std::unique_ptr<cluster::NatsConnection> another_connection(
      std::chrono::milliseconds api_timeout = std::chrono::milliseconds(5000)) {
    cluster::ConnectionSettings settings = cluster::testing::connection_to(cluster_->client_urls());
    settings.api_timeout = api_timeout;
    return std::make_unique<cluster::NatsConnection>(std::move(settings));
  }

  static inline int next_test_ = 1;
  JetStreamLogSettings settings_;
};

}  // namespace yoke::jetstream::testing
