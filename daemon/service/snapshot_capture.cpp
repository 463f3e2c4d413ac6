#include "snapshot_capture.h"

#include <algorithm>
#include <chrono>
#include <exception>
#include <optional>
#include <utility>

#include "unix_time.h"
#include "wire_types.h"

namespace yoke::daemon {

std::optional<v1::SnapshotRecord> record_heading(PoolService& service, const std::string& name,
                                                 std::uint64_t seq, std::uint64_t position,
                                                 std::uint64_t wall_time) {
  if (seq == 0 || service.registry().find(name) == nullptr) return std::nullopt;
  v1::SnapshotRecord record;
  record.set_pool(name);
  record.set_seq(seq);
  for (const auto& [client, mark] : service.ledger().clients_of(name)) {
    if (auto kept = snapshot_mark(client, mark, seq)) *record.add_clients() = *kept;
  }
  record.set_wall_time_unix_us(wall_time);
  record.set_journal_position(position);
  if (const PoolProgress* progress = service.progress(name)) {
    record.set_incarnation(progress->incarnation);
  }
  return record;
}

void add_engine_part(v1::SnapshotRecord& record, PoolService::EngineCapture engine) {
  *record.mutable_config() = std::move(engine.config);
  record.set_weight(engine.weight);
  record.set_pairs(engine.pairs);
  record.set_vertices(engine.vertices);
  record.set_edges(engine.edges);
  record.set_engine_state_format(kEngineStateFormat);
  record.set_engine_state(std::move(engine.state));
}

std::optional<v1::SnapshotRecord> capture_pool_at(PoolService& service, const std::string& name,
                                                 std::uint64_t position, std::uint64_t wall_time) {
  const PoolProgress* progress = service.progress(name);
  if (progress == nullptr) return std::nullopt;
  std::optional<v1::SnapshotRecord> record =
      record_heading(service, name, progress->seq, position, wall_time);
  if (!record) return std::nullopt;
  PoolService::EngineCapture engine = PoolService::capture_engine(*service.registry().find(name));
  if (engine.failure) std::rethrow_exception(engine.failure);
  add_engine_part(*record, std::move(engine));
  return record;
}

std::vector<v1::SnapshotRecord> capture_snapshot(PoolService& service) {
  const std::uint64_t wall_time = unix_time_us();
  const std::uint64_t position = service.next_journal_position();
  std::vector<v1::SnapshotRecord> records;
  for (const std::string& name : service.registry().names()) {
    if (auto record = capture_pool_at(service, name, position, wall_time)) {
      records.push_back(std::move(*record));
    }
  }
  return records;
}

std::optional<v1::SnapshotRecord> capture_pool_snapshot(PoolService& service,
                                                        const std::string& pool) {
  const PoolProgress* progress = service.progress(pool);
  if (progress == nullptr) return std::nullopt;
  return capture_pool_at(service, pool, progress->last_position + 1, unix_time_us());
}

std::optional<v1::ClientMark> snapshot_mark(const std::string& client, const RetryMark& mark,
                                            std::uint64_t durable_seq) {
  // The open window's batches are not in the log yet (they follow the snapshot's position, and
  // replay records them again), and may never be: they stay out.
  std::size_t kept = mark.recent.size();
  while (kept > 0 && mark.recent[kept - 1].seq > durable_seq) --kept;
  if (kept == 0) return std::nullopt;
  v1::ClientMark out;
  out.set_client_id(client);
  out.set_last_batch(mark.recent[kept - 1].batch_number);
  out.set_seq(mark.recent[kept - 1].seq);
  out.set_wall_time_unix_us(mark.wall_time_us);  // of its last closed window
  out.set_known_from(mark.known_from);
  for (std::size_t i = 0; i + 1 < kept; ++i) {
    out.add_earlier_batches(mark.recent[i].batch_number);
    out.add_earlier_seqs(mark.recent[i].seq);
  }
  return out;
}

RetryMark retry_mark_from_snapshot(const v1::ClientMark& mark, std::uint64_t snapshot_wall_time) {
  RetryMark out;
  const int earlier = std::min(mark.earlier_batches_size(), mark.earlier_seqs_size());
  for (int i = 0; i < earlier; ++i) {
    // Only increasing numbers below last_batch: anything else is not a ledger's and is left out.
    const std::uint64_t number = mark.earlier_batches(i);
    if (number >= mark.last_batch() || (!out.recent.empty() && number <= out.recent.back().batch_number)) {
      continue;
    }
    out.recent.push_back({number, mark.earlier_seqs(i)});
  }
  out.recent.push_back({mark.last_batch(), mark.seq()});
  // Older snapshots knew the last batch alone.
  out.known_from = mark.has_known_from()
                       ? std::min(mark.known_from(), out.recent.front().batch_number)
                       : out.recent.front().batch_number;
  out.wall_time_us = mark.wall_time_unix_us() != 0 ? mark.wall_time_unix_us() : snapshot_wall_time;
  return out;
}

}  // namespace yoke::daemon
