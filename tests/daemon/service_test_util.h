// Shared helpers of the daemon service tests: wire events and ingest messages, a PoolService
// over the local storage backend (a real journal and snapshot directory) in a temporary
// directory (the journal tests' TempDir), closing a window, and the certificate check of a pool.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <ostream>
#include <random>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/config/daemon_config.h"
#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/pool_service.h"
#include "daemon/service/recovery.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "daemon/storage/commit_log.h"
#include "yoke/pool.h"
#include "tests/journal/journal_test_util.h"
#include "yoke/v1/events.pb.h"
#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/records.pb.h"

namespace yoke {
// Readable pairs in gtest failure messages.
void PrintTo(const MatchedPair& pair, std::ostream* out);
}  // namespace yoke

namespace yoke::daemon::testing {

using journal::testing::TempDir;

// Wire events, as a client writes them.
v1::Event wire_add(VertexKey u);
v1::Event wire_set(VertexKey u, VertexKey v, Weight w);
v1::Event wire_unset(VertexKey u, VertexKey v);
v1::Event wire_remove(VertexKey u);
v1::Event wire_hold(VertexKey u, VertexKey v);
v1::Event wire_release(VertexKey u, VertexKey v);
// A valid event of any kind; ends, weights and kinds drawn so that zeros (left out on the
// wire), large keys and negative weights all come up.
v1::Event random_wire_event(std::mt19937_64& random);

// The EventBatch fields around the events.
struct BatchHeader {
  std::string client_id;
  std::uint64_t client_batch = 0;
  std::string pool;
  std::uint64_t after_batch = 0;
};

inline BatchHeader in_pool(std::string pool) { return BatchHeader{"", 0, std::move(pool), 0}; }
inline BatchHeader from_client(std::string client_id, std::uint64_t client_batch,
                               std::string pool = "", std::uint64_t after_batch = 0) {
  return BatchHeader{std::move(client_id), client_batch, std::move(pool), after_batch};
}

v1::EventBatch make_batch(const std::vector<v1::Event>& events, const BatchHeader& header = {});
// A serialized IngestRequest holding the batch, version 1 unless told.
std::string ingest_message(const v1::EventBatch& batch, std::uint32_t version = 1);
std::string ingest_message(const std::vector<v1::Event>& events, const BatchHeader& header = {});
// A serialized IngestRequest holding RetirePool{client id, batch, pool, at_seq}.
std::string retire_message(const std::string& pool, std::uint64_t at_seq = 0,
                           const std::string& client_id = "", std::uint64_t client_batch = 0);

// The engine events of wire events (every one valid).
std::vector<Event> engine_events(const std::vector<v1::Event>& events);

// A commit log that passes every call to `inner` (a real journal): tests override what they
// change (a group refused, a commit held).
class ForwardingCommitLog : public storage::CommitLog {
 public:
  explicit ForwardingCommitLog(storage::CommitLog& inner) : inner_(inner) {}

  std::string describe() const override { return inner_.describe(); }
  storage::Position first_position(std::string_view pool) const override {
    return inner_.first_position(pool);
  }
  std::unique_ptr<storage::GroupReader> read_from(storage::Position from,
                                                  std::string_view pool) override {
    return inner_.read_from(from, pool);
  }
  storage::Position end_position() const override { return inner_.end_position(); }
  void continue_from(storage::Position position) override { inner_.continue_from(position); }
  storage::CommittedWindow commit(std::vector<v1::JournalRecord> window) override {
    return inner_.commit(std::move(window));
  }
  std::size_t drop_before(storage::Position position) override {
    return inner_.drop_before(position);
  }

 private:
  storage::CommitLog& inner_;
};

// A pool setting of a few vertices and edges, for limits and weight bounds.
PoolSettings tiny_pool_settings();

// Journal options for tests: no fsync (speed; durability is the journal tests' subject).
journal::Options fast_journal(std::uint64_t segment_bytes = std::uint64_t{1} << 20);
DaemonConfig test_config(const std::filesystem::path& data_dir);
ServiceState fresh_state(const DaemonConfig& config);

// What one closed window answered and published.
struct WindowResult {
  std::vector<std::pair<Ticket, v1::Ack>> acks;
  std::vector<v1::Diff> diffs;
};
WindowResult close_window(PoolService& service);

// A PoolService over a journal in a fresh temporary directory, which can be closed and
// recovered from its journal (and snapshots) as a restarted daemon would.
class ServiceHarness {
 public:
  // The config's data_dir is replaced by the temporary directory.
  explicit ServiceHarness(DaemonConfig config = test_config({}));

  PoolService& service() { return *service_; }
  const DaemonConfig& config() const { return config_; }
  std::filesystem::path journal_dir() const { return config_.data_dir / "journal"; }
  std::filesystem::path snapshot_dir() const { return config_.data_dir / "snapshots"; }

  // Offers one batch with the next ticket; the immediate reply, if any.
  std::optional<v1::Ack> offer(const std::vector<v1::Event>& events, const BatchHeader& header = {});
  std::optional<v1::Ack> offer_bytes(std::string_view message);
  WindowResult close() { return close_window(*service_); }

  // Writes a snapshot of every pool at the service's journal position (between windows), as
  // the daemon's timer would. Returns the position.
  std::uint64_t snapshot(std::size_t keep = 2);

  // Destroys the service and closes the journal (which unlocks).
  void stop() {
    service_.reset();
    log_.reset();
  }
  // Stops, reopens the journal and recovers into a new service. Throws what recover() throws.
  RecoveryReport restart(std::size_t keep = 2);

 private:
  TempDir dir_;
  DaemonConfig config_;
  std::unique_ptr<journal::JournalCommitLog> log_;
  std::unique_ptr<PoolService> service_;  // writes to *log_
  Ticket next_ticket_ = 1;
};

// A seeded stream of valid batches over several pools, grouped in windows: vertex keys from a
// small range and weights from a small range (-1 .. max_w), so ties are common. Clients number
// their batches with gaps and sometimes name after_batch; some batches carry no client id.
struct ScriptBatch {
  BatchHeader header;
  std::vector<v1::Event> events;
};
using ScriptWindow = std::vector<ScriptBatch>;
struct ScriptSpec {
  std::vector<std::string> pools = {"default", "harbour"};
  std::size_t windows = 20;
  std::size_t max_batches_per_window = 4;
  std::size_t max_events_per_batch = 5;
  VertexKey keys = 24;
  Weight max_w = 6;
};
std::vector<ScriptWindow> random_script(const ScriptSpec& spec, std::uint64_t seed);

// Offers every batch of each window and closes it; fails unless every batch is accepted
// fresh. Appends each window's result to `results` when given.
::testing::AssertionResult run_script(ServiceHarness& harness,
                                      const std::vector<ScriptWindow>& windows,
                                      std::vector<WindowResult>* results = nullptr);

// check_certificate accepts the pool's exported certificate, the pool's weight and pairs are
// those of the certified matching, and the engine's static solve of the exported graph (itself
// certificate-checked) reaches the same weight.
::testing::AssertionResult pool_certified(const Pool& pool);

// The records in the journal's files, in their order there.
std::vector<v1::JournalRecord> journal_records(const std::filesystem::path& journal_dir);

// A pool's observable state, for "unchanged" and "identical after recovery" comparisons.
struct PoolView {
  std::uint64_t seq = 0;
  std::uint64_t incarnation = 0;  // PoolProgress::incarnation: recovery keeps it
  Weight weight = 0;
  std::size_t pairs = 0;
  std::size_t vertices = 0;
  std::size_t edges = 0;
  std::vector<MatchedPair> matching;
  friend bool operator==(const PoolView&, const PoolView&) = default;
};
void PrintTo(const PoolView& view, std::ostream* out);
PoolView view_of(PoolService& service, const std::string& pool);

}  // namespace yoke::daemon::testing
