#include "pool_claims.h"

#include <chrono>

#include "daemon/cluster/log_publisher.h"
#include "daemon/jetstream/claim_ledger.h"
#include "daemon/jetstream/claim_message.h"
#include "daemon/jetstream/log_stream.h"

namespace yoke::jetstream {
namespace {

std::string describe_claims(const JetStreamLogSettings& settings, const std::string& subject) {
  return "JetStream stream '" + settings.stream + "' (" + subject + ")";
}

}  // namespace

ClaimResult claim_pool(cluster::NatsConnection& connection, const JetStreamLogSettings& settings,
                       std::string_view pool, const v1::Owner& owner,
                       std::uint64_t expected_epoch, std::string_view reason) {
  const PoolSubjects subjects(settings.subject_prefix);
  const std::string subject = subjects.of_claims(pool);
  const std::string where = describe_claims(settings, subject);
  v1::PoolClaim claim;
  claim.set_pool(std::string(pool));
  *claim.mutable_owner() = owner;
  claim.set_expected_epoch(expected_epoch);
  claim.set_reason(std::string(reason));
  claim.set_wall_time_unix_us(static_cast<std::uint64_t>(
      std::chrono::duration_cast<std::chrono::microseconds>(
          std::chrono::system_clock::now().time_since_epoch())
          .count()));
  const ClaimMessage message = encode_claim(claim);
  ClaimResult result;
  result.claim_sequence = as_log_error(where + ": publishing a claim", [&] {
    return cluster::publish_and_wait(connection, subject, message.headers, message.data,
                                     settings.publish_timeout);
  });
  ClaimLedger ledger(subjects, subject, where);
  ledger.catch_up(connection, settings.stream, settings.read_timeout);
  const PoolOwnership& ownership = ledger.of(pool);
  result.accepted = ownership.epoch_at(result.claim_sequence + 1) == result.claim_sequence;
  result.epoch = ownership.epoch();
  result.owner = ownership.owner();
  return result;
}

PoolOwnership pool_ownership(const JetStreamView& view, std::string_view pool) {
  const std::string subject = view.subjects().of_claims(pool);
  ClaimLedger ledger(view.subjects(), subject, describe_claims(view.settings(), subject));
  ledger.catch_up(view.connection(), view.settings().stream, view.settings().read_timeout);
  return ledger.of(pool);
}

}  // namespace yoke::jetstream
