// Reading commit groups from the stream: an ordered consumer over one pool's subject or all
// pools' from a position, up to the last message stored when the reading began, judged by the
// log's rule (ownership_rule.h) from the claims of the pools it reads.
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <string_view>

#include "daemon/cluster/log_reader.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/jetstream/claim_ledger.h"
#include "daemon/jetstream/pool_subjects.h"
#include "daemon/storage/commit_log.h"

namespace yoke::jetstream {

class JetStreamGroupReader : public storage::GroupReader {
 public:
  // Reads `pool`'s groups (every pool's when empty). First loads the claims of the pool(s)
  // (their claim subject: one stream-info request, one lookup, and an ordered read of the
  // claims when there are any), then finds the first group at or after `from` (one API round
  // trip) and, when there is one, creates the consumer there (one more). `from` = 0 reads all
  // that is stored and checks nothing; from > 0 checks each pool's first stored message for a
  // dropped predecessor at or above `from`. `by_lookup`: no consumer (ReaderSettings). `where` names the log in messages. Throws
  // cluster::ClusterError, storage::LogError and LogDamage (a claim that cannot be read).
  JetStreamGroupReader(cluster::NatsConnection& connection, const std::string& stream,
                       const PoolSubjects& subjects, std::string_view pool,
                       storage::Position from, std::chrono::milliseconds read_timeout,
                       std::string where, bool by_lookup = false);

  // The next group the rule counts; groups it does not count are passed over and counted in
  // skipped(). A group stored after the claims were loaded makes the reader read the claims
  // stored since (one stream-info request and one lookup, more when there are new claims).
  // Throws LogDamage for a message that is not a pool's commit group, LogError when groups from
  // the position were dropped ("missing") or a stored message does not arrive in time.
  std::optional<storage::LoggedGroup> next() override;
  // Never: a stream has no torn tail (a message is stored whole or not at all).
  std::optional<std::string> stopped_early() const override { return std::nullopt; }
  std::uint64_t skipped() const override { return skipped_; }

 private:
  // Reads the claims stored since the last load; every claim below `claims_cover_` is folded.
  void load_claims();
  // Whether the filter has a message after `sequence` up to where the stream ended when the
  // reading began. One API round trip (none past that end).
  bool more_stored_after(std::uint64_t sequence);

  cluster::NatsConnection& connection_;
  std::string stream_;
  PoolSubjects subjects_;
  storage::Position from_;
  std::chrono::milliseconds read_timeout_;
  std::string where_;
  ClaimLedger claims_;
  std::uint64_t claims_cover_ = 0;  // the stream's last sequence before the last claim load
  std::uint64_t end_ = 0;           // the stream's last sequence when the reading began
  std::string filter_;
  std::unique_ptr<cluster::LogReader> reader_;  // null: nothing (more) to read
  std::set<std::string, std::less<>> pools_seen_;
  std::uint64_t skipped_ = 0;
};

}  // namespace yoke::jetstream
