// The log's rule of pool ownership, as a pure fold over one pool's claims (no NATS): every
// reader of the log applies it the same way, so the stream's order is the only arbiter.
//
// Per pool the epoch starts at 0. Claims in stream order: a claim is accepted iff its
// expected_epoch equals the epoch in force; the epoch then becomes the claim's own stream
// sequence and the owner the claim's owner. A window (commit group) at stream sequence S is
// counted iff its Yoke-Epoch equals the epoch in force at S: the sequence of the last accepted
// claim below S, or 0. Claims alone decide epochs (no window changes one).
#pragma once

#include <cstdint>
#include <optional>
#include <vector>

#include "yoke/v1/cluster.pb.h"
#include "yoke/v1/protocol.pb.h"

namespace yoke::jetstream {

// An accepted claim: from its sequence on (until the next accepted one), its epoch is in force.
struct EpochStart {
  std::uint64_t epoch = 0;  // = the claim's stream sequence
  v1::Owner owner;
};

class PoolOwnership {
 public:
  // Folds in the pool's next claim, stored at `sequence`. Claims must come in stream order:
  // a sequence at or below the last one folded in throws std::invalid_argument (nothing
  // changes). Returns whether the rule accepts it. O(1) amortized.
  bool apply(std::uint64_t sequence, const v1::PoolClaim& claim);

  // The epoch in force after every claim folded in (0 before any accepted one). O(1).
  std::uint64_t epoch() const { return history_.empty() ? 0 : history_.back().epoch; }
  // Its owner; nullopt at epoch 0 (nobody has claimed the pool). O(1).
  std::optional<v1::Owner> owner() const;
  // The epoch in force at stream sequence `sequence`, as far as the claims folded in go (the
  // caller folds in every claim below `sequence` first). O(log accepted claims).
  std::uint64_t epoch_at(std::uint64_t sequence) const;
  // Whether a window at `sequence` written under `epoch` counts. O(log accepted claims).
  bool accepts_window(std::uint64_t sequence, std::uint64_t epoch) const {
    return epoch == epoch_at(sequence);
  }

  // The accepted claims, oldest first.
  const std::vector<EpochStart>& history() const { return history_; }
  // The sequence of the last claim folded in (accepted or not), 0 before any.
  std::uint64_t last_sequence() const { return last_sequence_; }
  std::uint64_t claims_seen() const { return claims_seen_; }
  std::uint64_t claims_refused() const { return claims_seen_ - history_.size(); }

 private:
  std::vector<EpochStart> history_;
  std::uint64_t last_sequence_ = 0;
  std::uint64_t claims_seen_ = 0;
};

}  // namespace yoke::jetstream
