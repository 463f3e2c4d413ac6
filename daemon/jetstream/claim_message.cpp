#include "claim_message.h"

#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {

ClaimMessage encode_claim(const v1::PoolClaim& claim) {
  ClaimMessage message;
  message.headers = {{kClaimHeader, kClaimFormat}};
  claim.SerializeToString(&message.data);
  return message;
}

LoggedClaim decode_claim(const cluster::LogMessage& message, const std::string& pool,
                         const std::string& where) {
  const auto damaged = [&](const std::string& why) {
    return storage::LogDamage(where + ": message " + std::to_string(message.sequence) + " on '" +
                              message.subject + "' " + why);
  };
  const auto format = cluster::header_value(message.headers, kClaimHeader);
  if (!format || *format != kClaimFormat) {
    throw damaged("is not a pool claim (header " + std::string(kClaimHeader) + ": " +
                  (format ? std::string(*format) : std::string("none")) + ")");
  }
  LoggedClaim logged;
  logged.sequence = message.sequence;
  if (!logged.claim.ParseFromString(message.data)) throw damaged("holds a claim that does not parse");
  if (logged.claim.pool() != pool) {
    throw damaged("claims pool '" + logged.claim.pool() + "', not '" + pool + "'");
  }
  return logged;
}

}  // namespace yoke::jetstream
