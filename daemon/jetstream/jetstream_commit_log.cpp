#include "jetstream_commit_log.h"

#include <charconv>
#include <stdexcept>
#include <utility>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/log_publisher.h"
#include "daemon/cluster/message_lookup.h"
#include "daemon/cluster/stream_status.h"
#include "daemon/cluster/subject_purge.h"
#include "daemon/cluster/subject_scan.h"
#include "daemon/jetstream/claim_ledger.h"
#include "daemon/jetstream/group_message.h"
#include "daemon/jetstream/jetstream_group_reader.h"
#include "daemon/jetstream/log_stream.h"
#include "daemon/jetstream/window_acceptance.h"
#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {
namespace {

constexpr int kSequenceResync = 10077;  // "expected sequence does not match store"
constexpr int kStartMarkerAttempts = 3;

// The window's records by pool, pools in the order of their first records.
std::vector<std::pair<std::string, std::vector<v1::JournalRecord>>> groups_by_pool(
    std::vector<v1::JournalRecord> window) {
  std::vector<std::pair<std::string, std::vector<v1::JournalRecord>>> groups;
  std::map<std::string, std::size_t, std::less<>> index_of_pool;
  for (v1::JournalRecord& record : window) {
    const auto [it, added] = index_of_pool.try_emplace(record.pool(), groups.size());
    if (added) groups.emplace_back(record.pool(), std::vector<v1::JournalRecord>{});
    groups[it->second].second.push_back(std::move(record));
  }
  return groups;
}

}  // namespace

JetStreamView::JetStreamView(cluster::NatsConnection& connection, JetStreamLogSettings settings)
    : connection_(connection),
      settings_(std::move(settings)),
      subjects_(settings_.subject_prefix) {}

std::string JetStreamView::describe() const {
  return "JetStream stream '" + settings_.stream + "' (" + subjects_.all_pools() + " on " +
         connection_.servers_text() + ")";
}

storage::Position JetStreamView::first_position(std::string_view pool) const {
  const std::string filter = pool.empty() ? subjects_.all_pools() : subjects_.of_pool(pool);
  return as_log_error(describe() + ": finding the first group of '" + filter + "'", [&] {
    const storage::Position first =
        cluster::first_sequence_from(connection_, settings_.stream, filter, 1).value_or(0);
    if (pool.empty() || first == 0) return first;
    // Other subjects take sequences between a pool's groups: its history is whole from just
    // after the last dropped group (the first stored one's link), not only from that group. A
    // snapshot at "last applied + 1" below the first stored group still counts.
    const std::optional<cluster::LogMessage> message =
        cluster::message_at(connection_, settings_.stream, first);
    if (!message) return first;  // dropped meanwhile: the narrower answer stays true
    const auto link = cluster::header_value(message->headers, kPreviousHeader);
    std::uint64_t previous = 0;
    if (!link || std::from_chars(link->data(), link->data() + link->size(), previous).ec != std::errc{} ||
        previous == 0 || previous >= first) {
      return first;
    }
    return previous + 1;
  });
}

std::unique_ptr<storage::GroupReader> JetStreamView::read_from(storage::Position from,
                                                               std::string_view pool) {
  const std::string filter = pool.empty() ? subjects_.all_pools() : subjects_.of_pool(pool);
  return as_log_error(describe() + ": reading '" + filter + "' from " + std::to_string(from), [&] {
    return std::make_unique<JetStreamGroupReader>(connection_, settings_.stream, subjects_, pool,
                                                  from, settings_.read_timeout, describe(),
                                                  settings_.read_by_lookup);
  });
}

std::unique_ptr<JetStreamCommitLog> JetStreamCommitLog::open(cluster::NatsConnection& connection,
                                                             JetStreamLogSettings settings) {
  const cluster::StreamStatus status = ensure_log_stream(connection, settings);
  return std::unique_ptr<JetStreamCommitLog>(
      new JetStreamCommitLog(connection, std::move(settings), status.last_sequence + 1));
}

JetStreamCommitLog::JetStreamCommitLog(cluster::NatsConnection& connection,
                                       JetStreamLogSettings settings, storage::Position end)
    : view_(connection, std::move(settings)), end_(end) {}

void JetStreamCommitLog::continue_from(storage::Position position) {
  if (position <= end_) return;
  cluster::NatsConnection& connection = view_.connection();
  const std::string& stream = view_.settings().stream;
  const std::string marker = std::to_string(position);
  as_log_error(describe() + ": moving the next position to " + marker, [&] {
    const cluster::StreamStatus status = cluster::stream_status(connection, stream);
    if (status.messages != 0) {
      throw storage::LogError(describe() + ": cannot move the next position to " + marker +
                              ": the stream holds " + std::to_string(status.messages) +
                              " messages, up to sequence " +
                              std::to_string(status.last_sequence));
    }
    cluster::purge_stream_below(connection, stream, position);
    for (int attempt = 1;; ++attempt) {
      try {
        end_ = cluster::publish_and_wait(connection, view_.subjects().start_marker(), {}, marker,
                                         view_.settings().publish_timeout) +
               1;
        return;
      } catch (const cluster::ClusterError& error) {
        // The leader refuses the first publish after the move once while it catches up.
        if (error.jetstream_code() != kSequenceResync || attempt == kStartMarkerAttempts) throw;
      }
    }
  });
}

storage::Position JetStreamCommitLog::previous_of_pool(const std::string& pool) {
  const auto known = last_of_pool_.find(pool);
  if (known != last_of_pool_.end()) return known->second;
  const std::optional<cluster::LogMessage> last = cluster::last_message(
      view_.connection(), view_.settings().stream, view_.subjects().of_pool(pool));
  const storage::Position previous = last ? last->sequence : 0;
  last_of_pool_.emplace(pool, previous);
  return previous;
}

storage::CommittedWindow JetStreamCommitLog::commit(std::vector<v1::JournalRecord> window) {
  if (failed_) {
    throw storage::LogError(describe() + " refuses commits after a failed one; reopen it");
  }
  if (window.empty()) return {0, end_, {}};
  failed_ = true;  // until every message of the window is acknowledged
  storage::CommittedWindow committed;
  for (auto& group : groups_by_pool(std::move(window))) {
    const std::string& pool = group.first;
    const std::vector<v1::JournalRecord>& records = group.second;
    if (lost_pools_.count(pool) != 0) {
      committed.groups.push_back({pool, 0, false});
      continue;
    }
    std::string subject;
    std::string claims;
    try {
      subject = view_.subjects().of_pool(pool);
      claims = view_.subjects().of_claims(pool);
    } catch (const std::invalid_argument& error) {
      throw storage::LogError(describe() + ": a record cannot be stored: " + error.what());
    }
    const std::uint64_t epoch = epoch_of(pool);
    const storage::Position sequence =
        as_log_error(describe() + ": storing a group of pool '" + pool + "'", [&] {
          const GroupMessage message = encode_group(records, previous_of_pool(pool), epoch);
          return cluster::publish_and_wait(view_.connection(), subject, message.headers,
                                           message.data, view_.settings().publish_timeout);
        });
    last_of_pool_[pool] = sequence;
    bool accepted = false;
    if (unverified_epochs_.count(pool) != 0) {
      // A new epoch: the whole rule, so that an epoch the rule never gave is found too.
      ClaimLedger ledger(view_.subjects(), claims, describe());
      ledger.catch_up(view_.connection(), view_.settings().stream, view_.settings().read_timeout);
      accepted = ledger.of(pool).accepts_window(sequence, epoch);
      unverified_epochs_.erase(pool);
    } else {
      accepted = window_counted(view_.connection(), view_.settings().stream, claims, pool, epoch,
                                sequence, describe());
    }
    if (!accepted) lost_pools_.insert(pool);
    committed.groups.push_back({pool, sequence, accepted});
    if (committed.position == 0) committed.position = sequence;
    end_ = sequence + 1;
  }
  failed_ = false;
  committed.end = end_;
  return committed;
}

std::size_t JetStreamCommitLog::drop_before(storage::Position position) {
  return purge_below(view_.subjects().all_pools(), position);
}

std::size_t JetStreamCommitLog::drop_pool_before(std::string_view pool,
                                                 storage::Position position) {
  return purge_below(view_.subjects().of_pool(pool), position);
}

std::size_t JetStreamCommitLog::purge_below(const std::string& filter,
                                            storage::Position position) {
  cluster::NatsConnection& connection = view_.connection();
  const std::string& stream = view_.settings().stream;
  return as_log_error(describe() + ": dropping groups of '" + filter + "' below " +
                          std::to_string(position),
                      [&] {
                        const std::uint64_t before =
                            cluster::stream_status(connection, stream).messages;
                        cluster::purge_subject_below(connection, stream, filter, position);
                        const std::uint64_t after =
                            cluster::stream_status(connection, stream).messages;
                        return static_cast<std::size_t>(before > after ? before - after : 0);
                      });
}

void JetStreamCommitLog::set_epoch(std::string_view pool, std::uint64_t epoch) {
  epoch_of_pool_.insert_or_assign(std::string(pool), epoch);
  if (const auto known = last_of_pool_.find(pool); known != last_of_pool_.end()) {
    last_of_pool_.erase(known);
  }
  // Epoch 0 needs no fold: it is in force from the start, so the cheap check is exact.
  if (epoch != 0) {
    unverified_epochs_.emplace(pool);
  } else if (const auto it = unverified_epochs_.find(pool); it != unverified_epochs_.end()) {
    unverified_epochs_.erase(it);
  }
  const auto lost = lost_pools_.find(pool);
  if (lost != lost_pools_.end()) lost_pools_.erase(lost);
}

void JetStreamCommitLog::resume_after_failure() {
  for (const auto& [pool, epoch] : epoch_of_pool_) lost_pools_.insert(pool);
  for (const auto& [pool, last] : last_of_pool_) lost_pools_.insert(pool);
  last_of_pool_.clear();
  failed_ = false;
}

std::uint64_t JetStreamCommitLog::epoch_of(std::string_view pool) const {
  const auto it = epoch_of_pool_.find(pool);
  return it == epoch_of_pool_.end() ? 0 : it->second;
}

bool JetStreamCommitLog::lost(std::string_view pool) const {
  return lost_pools_.find(pool) != lost_pools_.end();
}

}  // namespace yoke::jetstream
