// One claim as one stream message on `<prefix>.claim.<token>`: header `Yoke-Claim:
// pool-claim/1`, data = a serialized yoke.v1.PoolClaim (proto/yoke/v1/cluster.proto). What a
// claim decides is ownership_rule.h's.
#pragma once

#include <cstdint>
#include <string>

#include "daemon/cluster/log_message.h"
#include "yoke/v1/cluster.pb.h"

namespace yoke::jetstream {

inline constexpr const char* kClaimHeader = "Yoke-Claim";
inline constexpr const char* kClaimFormat = "pool-claim/1";

struct ClaimMessage {
  cluster::Headers headers;
  std::string data;
};

// The message of `claim`. O(bytes).
ClaimMessage encode_claim(const v1::PoolClaim& claim);

// A claim as the log holds it: where it sits, and what it says.
struct LoggedClaim {
  std::uint64_t sequence = 0;
  v1::PoolClaim claim;
};

// The claim a message of `pool`'s claim subject holds. Throws storage::LogDamage naming
// `where` for a message of another format, data that does not parse, or a claim of another
// pool than its subject's. O(bytes).
LoggedClaim decode_claim(const cluster::LogMessage& message, const std::string& pool,
                         const std::string& where);

}  // namespace yoke::jetstream
