#include "claim_ledger.h"

#include <optional>

#include "daemon/cluster/log_reader.h"
#include "daemon/cluster/subject_scan.h"
#include "daemon/jetstream/claim_message.h"
#include "daemon/jetstream/log_stream.h"
#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {

ClaimLedger::ClaimLedger(const PoolSubjects& subjects, std::string filter, std::string where)
    : subjects_(subjects), filter_(std::move(filter)), where_(std::move(where)) {}

void ClaimLedger::catch_up(cluster::NatsConnection& connection, const std::string& stream,
                           std::chrono::milliseconds timeout) {
  const std::string context = where_ + ": reading the claims of '" + filter_ + "'";
  const std::optional<std::uint64_t> first = as_log_error(context, [&] {
    return cluster::first_sequence_from(connection, stream, filter_, last_read_ + 1);
  });
  if (!first) return;
  // Claims are few: looked up one by one, which works as soon as the stream has a leader (a
  // consumer created after a node died may wait for that node).
  cluster::ReaderSettings reading{stream, filter_, *first};
  reading.by_lookup = true;
  cluster::LogReader reader = as_log_error(context, [&] { return cluster::LogReader(connection, reading); });
  for (;;) {
    const std::optional<cluster::LogMessage> message =
        as_log_error(context, [&] { return reader.next(timeout); });
    if (!message) {
      throw storage::LogError(context + ": no claim arrived within " +
                              std::to_string(timeout.count()) + " ms after sequence " +
                              std::to_string(reader.last_sequence()) + " though more are stored");
    }
    const std::optional<std::string> pool = subjects_.pool_of_claim_subject(message->subject);
    if (!pool) {
      throw storage::LogDamage(where_ + ": message " + std::to_string(message->sequence) +
                               " on '" + message->subject + "' is on no pool's claim subject");
    }
    const LoggedClaim logged = decode_claim(*message, *pool, where_);
    pools_[*pool].apply(logged.sequence, logged.claim);
    last_read_ = logged.sequence;
    if (message->pending == 0) return;
  }
}

const PoolOwnership& ClaimLedger::of(std::string_view pool) const {
  static const PoolOwnership unclaimed;
  const auto it = pools_.find(pool);
  return it == pools_.end() ? unclaimed : it->second;
}

}  // namespace yoke::jetstream
