// A claim as one message (daemon/jetstream/claim_message.h): the claim comes back whole; a
// message of another format, data that does not parse or a claim of another pool than its
// subject's is LogDamage naming the message.
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/jetstream/claim_message.h"
#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {
namespace {

v1::PoolClaim claim_of(const std::string& pool) {
  v1::PoolClaim claim;
  claim.set_pool(pool);
  claim.mutable_owner()->set_instance("west");
  claim.mutable_owner()->set_query("tcp://10.0.0.2:7412");
  claim.set_expected_epoch(41);
  claim.set_reason("takeover");
  claim.set_wall_time_unix_us(1'700'000'000'000'000);
  return claim;
}

cluster::LogMessage as_stored(const ClaimMessage& message, std::uint64_t sequence) {
  return {sequence, "t.claim.quay", message.headers, message.data, 0};
}

TEST(ClaimMessage, TheClaimComesBackWhole) {
  const v1::PoolClaim claim = claim_of("quay");
  const ClaimMessage message = encode_claim(claim);
  EXPECT_EQ(cluster::header_value(message.headers, kClaimHeader), "pool-claim/1");
  const LoggedClaim logged = decode_claim(as_stored(message, 57), "quay", "t");
  EXPECT_EQ(logged.sequence, 57u);
  EXPECT_EQ(logged.claim.SerializeAsString(), claim.SerializeAsString());
}

TEST(ClaimMessage, ForeignMessagesAreDamage) {
  const ClaimMessage good = encode_claim(claim_of("quay"));
  ClaimMessage no_format = good;
  no_format.headers.clear();
  ClaimMessage other_format = good;
  other_format.headers[0].second = "pool-claim/2";
  ClaimMessage garbage = good;
  garbage.data = "\xff\xff not a claim";
  const ClaimMessage other_pool = encode_claim(claim_of("dock"));
  for (const ClaimMessage* message :
       std::vector<const ClaimMessage*>{&no_format, &other_format, &garbage, &other_pool}) {
    try {
      decode_claim(as_stored(*message, 9), "quay", "stream t");
      ADD_FAILURE() << "decoded a damaged claim";
    } catch (const storage::LogDamage& error) {
      EXPECT_NE(std::string(error.what()).find("message 9 on 't.claim.quay'"), std::string::npos)
          << error.what();
    }
  }
}

}  // namespace
}  // namespace yoke::jetstream
