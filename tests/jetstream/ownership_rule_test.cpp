// The log's rule of pool ownership as a fold (daemon/jetstream/ownership_rule.h), without a
// cluster: accepted and refused claims, the epoch at each place of the log, which windows
// count, claims out of order, and random claim histories checked against a plain restatement
// of the rule.
#include <cstdint>
#include <optional>
#include <random>
#include <stdexcept>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/jetstream/ownership_rule.h"

namespace yoke::jetstream {
namespace {

v1::PoolClaim claim(const std::string& instance, std::uint64_t expected_epoch) {
  v1::PoolClaim c;
  c.set_pool("quay");
  c.mutable_owner()->set_instance(instance);
  c.mutable_owner()->set_ingest("tcp://" + instance + ":7410");
  c.set_expected_epoch(expected_epoch);
  c.set_reason("takeover");
  return c;
}

TEST(OwnershipRule, AnUnclaimedPoolIsAtEpochZeroWithNoOwner) {
  const PoolOwnership pool;
  EXPECT_EQ(pool.epoch(), 0u);
  EXPECT_EQ(pool.owner(), std::nullopt);
  EXPECT_EQ(pool.epoch_at(1), 0u);
  EXPECT_EQ(pool.epoch_at(1000), 0u);
  EXPECT_TRUE(pool.accepts_window(7, 0));
  EXPECT_FALSE(pool.accepts_window(7, 3));
  EXPECT_EQ(pool.claims_seen(), 0u);
}

TEST(OwnershipRule, AnAcceptedClaimStartsItsEpochJustAfterItself) {
  PoolOwnership pool;
  EXPECT_TRUE(pool.apply(10, claim("east", 0)));
  EXPECT_EQ(pool.epoch(), 10u);
  ASSERT_TRUE(pool.owner().has_value());
  EXPECT_EQ(pool.owner()->instance(), "east");
  EXPECT_EQ(pool.owner()->ingest(), "tcp://east:7410");
  EXPECT_EQ(pool.epoch_at(9), 0u);
  EXPECT_EQ(pool.epoch_at(10), 0u);  // the claim itself is not below its own sequence
  EXPECT_EQ(pool.epoch_at(11), 10u);
  EXPECT_TRUE(pool.accepts_window(9, 0));  // the old owner's last window, before the claim
  EXPECT_FALSE(pool.accepts_window(11, 0));
  EXPECT_TRUE(pool.accepts_window(11, 10));
  EXPECT_FALSE(pool.accepts_window(9, 10));  // a window cannot be under a claim after it
}

TEST(OwnershipRule, OfTwoClaimsExpectingTheSameEpochTheFirstInTheLogWins) {
  PoolOwnership pool;
  EXPECT_TRUE(pool.apply(5, claim("east", 0)));
  EXPECT_FALSE(pool.apply(6, claim("west", 0)));
  EXPECT_EQ(pool.epoch(), 5u);
  EXPECT_EQ(pool.owner()->instance(), "east");
  EXPECT_EQ(pool.claims_seen(), 2u);
  EXPECT_EQ(pool.claims_refused(), 1u);
  // The loser's windows never count, whatever epoch they name.
  EXPECT_FALSE(pool.accepts_window(8, 6));
  EXPECT_FALSE(pool.accepts_window(8, 0));
  EXPECT_TRUE(pool.accepts_window(8, 5));
}

TEST(OwnershipRule, StaleFutureAndRefusedEpochsAreRefused) {
  PoolOwnership pool;
  ASSERT_TRUE(pool.apply(10, claim("east", 0)));
  EXPECT_FALSE(pool.apply(11, claim("west", 0)));   // stale: the pool was claimed since
  EXPECT_FALSE(pool.apply(12, claim("west", 12)));  // its own sequence
  EXPECT_FALSE(pool.apply(13, claim("west", 40)));  // an epoch that does not exist yet
  EXPECT_FALSE(pool.apply(14, claim("west", 11)));  // a refused claim is no epoch
  EXPECT_EQ(pool.epoch(), 10u);
  EXPECT_TRUE(pool.apply(20, claim("west", 10)));
  EXPECT_TRUE(pool.apply(30, claim("north", 20)));
  EXPECT_FALSE(pool.apply(31, claim("east", 10)));  // an epoch that was, but is no more
  EXPECT_EQ(pool.epoch(), 30u);
  EXPECT_EQ(pool.owner()->instance(), "north");
  ASSERT_EQ(pool.history().size(), 3u);
  EXPECT_EQ(pool.history()[1].epoch, 20u);
  EXPECT_EQ(pool.history()[1].owner.instance(), "west");
  EXPECT_EQ(pool.epoch_at(15), 10u);
  EXPECT_EQ(pool.epoch_at(25), 20u);
  EXPECT_EQ(pool.epoch_at(1000), 30u);
  EXPECT_TRUE(pool.accepts_window(19, 10));
  EXPECT_FALSE(pool.accepts_window(21, 10));
  EXPECT_FALSE(pool.accepts_window(16, 11));
  EXPECT_EQ(pool.last_sequence(), 31u);
}

TEST(OwnershipRule, ClaimsOutOfStreamOrderAreAnErrorAndChangeNothing) {
  PoolOwnership pool;
  ASSERT_TRUE(pool.apply(10, claim("east", 0)));
  EXPECT_THROW(pool.apply(10, claim("west", 10)), std::invalid_argument);
  EXPECT_THROW(pool.apply(9, claim("west", 10)), std::invalid_argument);
  EXPECT_EQ(pool.epoch(), 10u);
  EXPECT_EQ(pool.claims_seen(), 1u);
  PoolOwnership empty;
  EXPECT_THROW(empty.apply(0, claim("east", 0)), std::invalid_argument);
  EXPECT_EQ(empty.epoch(), 0u);
}

// The rule restated as plainly as possible: replay every claim below `sequence`.
std::uint64_t epoch_by_replay(const std::vector<std::pair<std::uint64_t, std::uint64_t>>& claims,
                              std::uint64_t sequence) {
  std::uint64_t epoch = 0;
  for (const auto& [at, expected] : claims) {
    if (at >= sequence) break;
    if (expected == epoch) epoch = at;
  }
  return epoch;
}

TEST(OwnershipRule, RandomHistoriesAgreeWithReplayingTheRule) {
  std::mt19937_64 random(20261203);
  for (int history = 0; history < 300; ++history) {
    PoolOwnership pool;
    std::vector<std::pair<std::uint64_t, std::uint64_t>> claims;  // (sequence, expected)
    std::vector<std::uint64_t> sequences_so_far = {0};
    std::uint64_t sequence = 0;
    const int count = static_cast<int>(random() % 12);
    for (int i = 0; i < count; ++i) {
      sequence += 1 + random() % 5;
      // Expect an epoch that is, was, never was (a refused claim's), or is yet to come.
      std::uint64_t expected = 0;
      switch (random() % 4) {
        case 0: expected = pool.epoch(); break;
        case 1: expected = sequences_so_far[random() % sequences_so_far.size()]; break;
        case 2: expected = sequence + random() % 4; break;
        default: expected = random() % (sequence + 1); break;
      }
      const bool accepted = pool.apply(sequence, claim(std::string("i").append(std::to_string(i)), expected));
      EXPECT_EQ(accepted, expected == epoch_by_replay(claims, sequence));
      claims.emplace_back(sequence, expected);
      sequences_so_far.push_back(sequence);
    }
    for (std::uint64_t at = 1; at <= sequence + 2; ++at) {
      const std::uint64_t expected_epoch = epoch_by_replay(claims, at);
      ASSERT_EQ(pool.epoch_at(at), expected_epoch) << "history " << history << " at " << at;
      for (const std::uint64_t epoch : sequences_so_far) {
        EXPECT_EQ(pool.accepts_window(at, epoch), epoch == expected_epoch);
      }
    }
    EXPECT_EQ(pool.epoch(), epoch_by_replay(claims, sequence + 1));
  }
}

}  // namespace
}  // namespace yoke::jetstream
