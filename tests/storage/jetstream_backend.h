// The JetStream backend of the contract tests: one local three-node cluster per test suite
// (tools/nats_cluster), a fresh stream and subject prefix per test, R3.
#pragma once

#include <atomic>
#include <chrono>
#include <cstdint>
#include <memory>
#include <string>

#include "daemon/cluster/log_publisher.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/stream_status.h"
#include "daemon/cluster/subject_purge.h"
#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/jetstream/jetstream_snapshot_store.h"
#include "daemon/storage/commit_log.h"
#include "tools/nats_cluster/local_nats_cluster.h"

namespace yoke::storage::testing {

class JetStreamBackend {
 public:
  static constexpr const char* kName = "jetstream";

  static void set_up_suite() {
    cluster_ = std::make_unique<nats_cluster::LocalNatsCluster>();
    cluster::ConnectionSettings settings;
    settings.servers = cluster_->client_urls();
    settings.name = "yoke-storage-contract";
    connection_ = std::make_unique<cluster::NatsConnection>(std::move(settings));
  }
  static void tear_down_suite() {
    connection_.reset();
    cluster_.reset();
  }

  JetStreamBackend() {
    const int test = next_test_++;
    settings_.stream = "contract-" + std::to_string(test);
    // Appended: GCC 12 warns (-Wrestrict, a false alarm) on "t" + std::to_string(test).
    settings_.subject_prefix = std::string("t").append(std::to_string(test)).append(".yoke");
    settings_.replicas = 3;
    settings_.max_bytes = 32 << 20;  // a cluster's streams together stay below 1 GB
  }

  std::unique_ptr<CommitLog> open_log() {
    return jetstream::JetStreamCommitLog::open(*connection_, settings_);
  }
  std::unique_ptr<CommitLogView> open_view() {
    return std::make_unique<jetstream::JetStreamView>(*connection_, settings_);
  }
  // A message on a pool's subject that is not a commit group (no format header, no records).
  void store_foreign_entry() {
    cluster::publish_and_wait(*connection_,
                              subjects().of_pool("quay"),
                              {}, "\xff\xff not a record", std::chrono::milliseconds(5000));
  }

  std::unique_ptr<SnapshotStore> open_snapshots(std::size_t keep) {
    return jetstream::JetStreamSnapshotStore::open(*connection_, settings_, keep);
  }
  // A stored message cannot be changed (and the stream denies deletes): a foreign message
  // after the manifest makes the snapshot's subject end without one, as a torn write would.
  void damage_snapshot(Position position) {
    cluster::publish_and_wait(*connection_, subjects().of_snapshot(position),
                              {{"Yoke-Snapshot-Chunk", "0"}}, "\x01 not a manifest",
                              std::chrono::milliseconds(5000));
  }
  void remove_snapshot(Position position) {
    const std::uint64_t end = cluster::stream_status(*connection_, settings_.stream).last_sequence;
    cluster::purge_subject_below(*connection_, settings_.stream, subjects().of_snapshot(position),
                                 end + 1);
  }

  static cluster::NatsConnection& connection() { return *connection_; }
  const jetstream::JetStreamLogSettings& settings() const { return settings_; }

 private:
  jetstream::PoolSubjects subjects() const {
    return jetstream::PoolSubjects(settings_.subject_prefix);
  }

  static inline std::unique_ptr<nats_cluster::LocalNatsCluster> cluster_;
  static inline std::unique_ptr<cluster::NatsConnection> connection_;
  static inline std::atomic<int> next_test_{1};
  jetstream::JetStreamLogSettings settings_;
};

}  // namespace yoke::storage::testing
