// The claims of one pool (or of every pool) read from the stream and folded by the log's rule
// (ownership_rule.h), kept up to date by reading only the claims stored since the last read.
// Used by the group readers, claim_pool and pool_ownership (pool_claims.h), so that all of
// them judge with the same fold.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <map>
#include <string>
#include <string_view>

#include "daemon/cluster/nats_connection.h"
#include "daemon/jetstream/ownership_rule.h"
#include "daemon/jetstream/pool_subjects.h"

namespace yoke::jetstream {

class ClaimLedger {
 public:
  // Reads `filter`: subjects.of_claims(pool) or subjects.all_claims(). `where` names the log
  // in messages. Sends nothing.
  ClaimLedger(const PoolSubjects& subjects, std::string filter, std::string where);

  // Reads every claim of the filter stored after the last one read, up to the last one stored
  // when it ends (at least every claim acknowledged before the call), and folds each into its
  // pool's PoolOwnership. One API round trip when there is none; otherwise one more to create
  // an ordered consumer, then O(claims read). Throws storage::LogDamage for a message that is
  // not a claim of its subject's pool, storage::LogError when the stream cannot be read or a
  // stored claim does not arrive within `timeout`.
  void catch_up(cluster::NatsConnection& connection, const std::string& stream,
                std::chrono::milliseconds timeout);

  // The fold of `pool`'s claims read so far (an empty one, epoch 0, when it has none). O(log
  // pools).
  const PoolOwnership& of(std::string_view pool) const;
  // The sequence of the last claim read (0: none).
  std::uint64_t last_read() const { return last_read_; }

 private:
  PoolSubjects subjects_;
  std::string filter_;
  std::string where_;
  std::map<std::string, PoolOwnership, std::less<>> pools_;
  std::uint64_t last_read_ = 0;
};

}  // namespace yoke::jetstream
