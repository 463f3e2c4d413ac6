#include "daemon/failover/takeover_rule.h"

#include <gtest/gtest.h>

namespace yoke::failover {
namespace {

using std::chrono::milliseconds;

const TakeoverTimes kTimes{milliseconds(500), milliseconds(3000)};
const Clock::time_point kStart{milliseconds(1'000'000)};

// The pool "dunmere" is owned by "orrin" with standbys "pella" (rank 1) and "tessaly" (rank 2).
PoolStanding dunmere(std::optional<std::string> serving, bool served_here = false) {
  return {"dunmere", "orrin", {"pella", "tessaly"}, std::move(serving), served_here};
}

v1::Heartbeat beat_of(const std::string& instance, std::uint64_t beat) {
  v1::Heartbeat heartbeat;
  heartbeat.mutable_owner()->set_instance(instance);
  heartbeat.set_beat(beat);
  heartbeat.set_sent_unix_us(beat * 500'000);
  return heartbeat;
}

TEST(TakeoverRule, TheConfiguredOwnerClaimsAPoolNobodyServesAtOnce) {
  const HeartbeatBoard board(kStart);
  EXPECT_EQ(claim_reason(dunmere(std::nullopt), "orrin", board, kTimes, kStart), "start");
}

TEST(TakeoverRule, AnInstanceTheLogNamesClaimsAgainAfterItsOwnRestart) {
  const HeartbeatBoard board(kStart);
  EXPECT_EQ(claim_reason(dunmere("pella"), "pella", board, kTimes, kStart), "restart");
  EXPECT_EQ(claim_reason(dunmere("orrin"), "orrin", board, kTimes, kStart), "restart");
}

TEST(TakeoverRule, NothingIsClaimedThatIsServedHereOrThatThisInstanceHasNoRoleIn) {
  const HeartbeatBoard board(kStart);
  const Clock::time_point late = kStart + milliseconds(60'000);
  EXPECT_EQ(claim_reason(dunmere("orrin", true), "orrin", board, kTimes, late), std::nullopt);
  EXPECT_EQ(claim_reason(dunmere("pella"), "quenby", board, kTimes, late), std::nullopt);
  EXPECT_EQ(claim_reason(dunmere(std::nullopt), "quenby", board, kTimes, late), std::nullopt);
}

TEST(TakeoverRule, ALiveServerIsNeverChallengedEvenByTheConfiguredOwner) {
  HeartbeatBoard board(kStart);
  for (int beat = 1; beat <= 40; ++beat) {
    const Clock::time_point at = kStart + milliseconds(500) * beat;
    board.heard(beat_of("pella", static_cast<std::uint64_t>(beat)), at);
    EXPECT_EQ(claim_reason(dunmere("pella"), "orrin", board, kTimes, at), std::nullopt);
    EXPECT_EQ(claim_reason(dunmere("pella"), "tessaly", board, kTimes, at), std::nullopt);
  }
}

TEST(TakeoverRule, StandbysClaimFromASilentServerInRankOrder) {
  HeartbeatBoard board(kStart);
  board.heard(beat_of("orrin", 1), kStart);
  // pella (rank 1) waits takeover + 1 heartbeat, tessaly (rank 2) one heartbeat more.
  const Clock::time_point pella_due = kStart + milliseconds(3500);
  const Clock::time_point tessaly_due = kStart + milliseconds(4000);
  EXPECT_EQ(claim_reason(dunmere("orrin"), "pella", board, kTimes, pella_due - milliseconds(1)),
            std::nullopt);
  EXPECT_EQ(claim_reason(dunmere("orrin"), "pella", board, kTimes, pella_due), "takeover");
  EXPECT_EQ(claim_reason(dunmere("orrin"), "tessaly", board, kTimes, pella_due), std::nullopt);
  EXPECT_EQ(claim_reason(dunmere("orrin"), "tessaly", board, kTimes, tessaly_due), "takeover");
}

TEST(TakeoverRule, TheConfiguredOwnerTakesItsPoolBackOnlyFromASilentStandby) {
  HeartbeatBoard board(kStart);
  board.heard(beat_of("pella", 1), kStart);
  EXPECT_EQ(claim_reason(dunmere("pella"), "orrin", board, kTimes, kStart + milliseconds(2999)),
            std::nullopt);
  EXPECT_EQ(claim_reason(dunmere("pella"), "orrin", board, kTimes, kStart + milliseconds(3000)),
            "takeover");
}

TEST(TakeoverRule, AStandbyStartsAPoolWhoseOwnerNeverCame) {
  const HeartbeatBoard board(kStart);  // orrin never heard
  EXPECT_EQ(claim_reason(dunmere(std::nullopt), "pella", board, kTimes, kStart + milliseconds(3499)),
            std::nullopt);
  EXPECT_EQ(claim_reason(dunmere(std::nullopt), "pella", board, kTimes, kStart + milliseconds(3500)),
            "start");
}

}  // namespace
}  // namespace yoke::failover
