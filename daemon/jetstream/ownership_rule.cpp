#include "ownership_rule.h"

#include <algorithm>
#include <stdexcept>
#include <string>

namespace yoke::jetstream {

bool PoolOwnership::apply(std::uint64_t sequence, const v1::PoolClaim& claim) {
  if (sequence == 0 || sequence <= last_sequence_) {
    throw std::invalid_argument("claim at sequence " + std::to_string(sequence) +
                                " is not after the last one folded in (" +
                                std::to_string(last_sequence_) + "): claims go in stream order");
  }
  last_sequence_ = sequence;
  ++claims_seen_;
  if (claim.expected_epoch() != epoch()) return false;
  history_.push_back({sequence, claim.owner()});
  return true;
}

std::optional<v1::Owner> PoolOwnership::owner() const {
  if (history_.empty()) return std::nullopt;
  return history_.back().owner;
}

std::uint64_t PoolOwnership::epoch_at(std::uint64_t sequence) const {
  // The first accepted claim at or above `sequence`; the one before it is in force.
  const auto after = std::lower_bound(
      history_.begin(), history_.end(), sequence,
      [](const EpochStart& start, std::uint64_t at) { return start.epoch < at; });
  return after == history_.begin() ? 0 : std::prev(after)->epoch;
}

}  // namespace yoke::jetstream
