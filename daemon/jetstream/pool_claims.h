// Claiming a pool and asking who serves it, on the installation's stream: the operations a
// daemon of a cluster uses to take a pool over (daemon/failover) and to refuse batches for a
// pool it does not serve.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "daemon/cluster/nats_connection.h"
#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/jetstream/ownership_rule.h"
#include "yoke/v1/protocol.pb.h"

namespace yoke::jetstream {

struct ClaimResult {
  bool accepted = false;             // the rule accepted this claim
  std::uint64_t claim_sequence = 0;  // where the claim is stored: the epoch it started if accepted
  // The pool's epoch and owner in force after every claim read (those after this one too, so
  // normally: this claim's when accepted, the winner's when not); owner nullopt at epoch 0.
  std::uint64_t epoch = 0;
  std::optional<v1::Owner> owner;
};

// Publishes a claim of `pool` for `owner` expecting `expected_epoch` (the pool's epoch as the
// claimer read it; `reason`: "start", "takeover", "handback", "operator") and reads the pool's
// claim subject up to it to say whether the rule accepted it. When accepted, the claimer
// writes under epoch = claim_sequence (JetStreamCommitLog::set_epoch) once it has read the
// pool's windows below claim_sequence. Cost: one acknowledged publish, then one API round trip,
// an ordered consumer and O(the pool's claims) to read them (claims are never purged; they are
// few). Throws storage::LogError when the claim cannot be published (a timeout: it may be
// stored; pool_ownership tells) or the claims cannot be read, storage::LogDamage for a claim
// message that cannot be read, std::invalid_argument for an empty pool name.
ClaimResult claim_pool(cluster::NatsConnection& connection, const JetStreamLogSettings& settings,
                       std::string_view pool, const v1::Owner& owner,
                       std::uint64_t expected_epoch, std::string_view reason);

// The fold of `pool`'s claims as stored now: epoch(), owner(), history(). One ordered read of
// the pool's claim subject: one API round trip when it holds none, else one more and
// O(claims). Throws as claim_pool reads.
PoolOwnership pool_ownership(const JetStreamView& view, std::string_view pool);

}  // namespace yoke::jetstream
