#include "jetstream_group_reader.h"

#include "daemon/cluster/stream_status.h"
#include "daemon/cluster/subject_scan.h"
#include "daemon/jetstream/group_message.h"
#include "daemon/jetstream/log_stream.h"
#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {

JetStreamGroupReader::JetStreamGroupReader(cluster::NatsConnection& connection,
                                           const std::string& stream,
                                           const PoolSubjects& subjects, std::string_view pool,
                                           storage::Position from,
                                           std::chrono::milliseconds read_timeout,
                                           std::string where, bool by_lookup)
    : connection_(connection),
      stream_(stream),
      subjects_(subjects),
      from_(from),
      read_timeout_(read_timeout),
      where_(std::move(where)),
      claims_(subjects, pool.empty() ? subjects.all_claims() : subjects.of_claims(pool), where_) {
  load_claims();
  end_ = claims_cover_;
  const std::string filter = pool.empty() ? subjects_.all_pools() : subjects_.of_pool(pool);
  filter_ = filter;
  const std::optional<std::uint64_t> first =
      cluster::first_sequence_from(connection, stream, filter, from == 0 ? 1 : from);
  if (first) {
    cluster::ReaderSettings reading{stream, filter, *first};
    reading.by_lookup = by_lookup;
    reader_ = std::make_unique<cluster::LogReader>(connection, reading);
  }
}

void JetStreamGroupReader::load_claims() {
  // The stream's end first: every claim below it is stored before the claims are read.
  claims_cover_ = as_log_error(where_ + ": reading where the stream ends", [&] {
    return cluster::stream_status(connection_, stream_).last_sequence;
  });
  claims_.catch_up(connection_, stream_, read_timeout_);
}

bool JetStreamGroupReader::more_stored_after(std::uint64_t sequence) {
  // A consumer's pending count can read 0 too early (a delivery made before the server counted
  // what remains, seen on a loaded machine): the stream leader says whether more was stored.
  if (sequence >= end_) return false;
  const std::optional<std::uint64_t> next = as_log_error(where_ + ": reading failed", [&] {
    return cluster::first_sequence_from(connection_, stream_, filter_, sequence + 1);
  });
  return next && *next <= end_;
}

std::optional<storage::LoggedGroup> JetStreamGroupReader::next() {
  while (reader_) {
    std::optional<cluster::LogMessage> message =
        as_log_error(where_ + ": reading failed", [&] { return reader_->next(read_timeout_); });
    if (!message) {
      throw storage::LogError(where_ + ": no message arrived within " +
                              std::to_string(read_timeout_.count()) + " ms after sequence " +
                              std::to_string(reader_->last_sequence()) +
                              " though more are stored");
    }
    if (message->pending == 0 && !more_stored_after(message->sequence)) {
      reader_.reset();  // the last one stored when the reading began
    }
    const std::optional<std::string> pool = subjects_.pool_of_subject(message->subject);
    if (!pool) {
      throw storage::LogDamage(where_ + ": message " + std::to_string(message->sequence) +
                               " on '" + message->subject + "' is on no pool's subject");
    }
    DecodedGroup decoded = decode_group(std::move(*message), *pool, where_);
    // Every stored message of the pool links to an earlier one, counted or not: the first one
    // at or above `from` linking at or above `from` means one in between was dropped.
    if (from_ > 0 && pools_seen_.insert(*pool).second && decoded.previous_of_pool >= from_) {
      throw storage::LogError(where_ + ": groups of pool '" + *pool + "' from position " +
                              std::to_string(from_) + " are missing (dropped): its first " +
                              "stored group at or above it is " +
                              std::to_string(decoded.group.position) + ", which follows one at " +
                              std::to_string(decoded.previous_of_pool));
    }
    if (decoded.group.position > claims_cover_) load_claims();
    if (claims_.of(*pool).accepts_window(decoded.group.position, decoded.epoch)) {
      return std::move(decoded.group);
    }
    ++skipped_;
  }
  return std::nullopt;
}

}  // namespace yoke::jetstream
