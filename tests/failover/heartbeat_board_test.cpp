#include "daemon/failover/heartbeat_board.h"

#include <gtest/gtest.h>

namespace yoke::failover {
namespace {

using std::chrono::milliseconds;

v1::Heartbeat beat_of(const std::string& instance, std::uint64_t beat, std::uint64_t sent_us) {
  v1::Heartbeat heartbeat;
  heartbeat.mutable_owner()->set_instance(instance);
  heartbeat.set_beat(beat);
  heartbeat.set_sent_unix_us(sent_us);
  return heartbeat;
}

TEST(HeartbeatBoard, AnInstanceNeverHeardIsSilentSinceListeningBegan) {
  const Clock::time_point start{milliseconds(10'000)};
  const HeartbeatBoard board(start);
  EXPECT_EQ(board.silent_for("tessaly", start + milliseconds(700)), milliseconds(700));
  EXPECT_EQ(board.silent_for("tessaly", start - milliseconds(5)), Clock::duration::zero());
  EXPECT_EQ(board.last("tessaly"), nullptr);
}

TEST(HeartbeatBoard, SilenceCountsFromTheLastBeatHeard) {
  const Clock::time_point start{milliseconds(0)};
  HeartbeatBoard board(start);
  board.heard(beat_of("orrin", 1, 1000), start + milliseconds(100));
  board.heard(beat_of("orrin", 2, 2000), start + milliseconds(600));
  EXPECT_EQ(board.silent_for("orrin", start + milliseconds(1600)), milliseconds(1000));
  ASSERT_NE(board.last("orrin"), nullptr);
  EXPECT_EQ(board.last("orrin")->beat(), 2u);
  // Another instance's beats change nothing for this one.
  board.heard(beat_of("tessaly", 9, 9000), start + milliseconds(1500));
  EXPECT_EQ(board.silent_for("orrin", start + milliseconds(1600)), milliseconds(1000));
}

TEST(HeartbeatBoard, AStaleBeatDeliveredLateIsIgnored) {
  const Clock::time_point start{milliseconds(0)};
  HeartbeatBoard board(start);
  board.heard(beat_of("orrin", 5, 5000), start + milliseconds(100));
  board.heard(beat_of("orrin", 4, 4000), start + milliseconds(900));  // reordered delivery
  EXPECT_EQ(board.last("orrin")->beat(), 5u);
  EXPECT_EQ(board.silent_for("orrin", start + milliseconds(1100)), milliseconds(1000));
}

TEST(HeartbeatBoard, ARestartedInstanceCountingFromOneAgainIsHeard) {
  const Clock::time_point start{milliseconds(0)};
  HeartbeatBoard board(start);
  board.heard(beat_of("orrin", 400, 400'000), start + milliseconds(100));
  board.heard(beat_of("orrin", 1, 900'000), start + milliseconds(800));
  EXPECT_EQ(board.last("orrin")->beat(), 1u);
  EXPECT_EQ(board.silent_for("orrin", start + milliseconds(800)), Clock::duration::zero());
}

TEST(HeartbeatBoard, AnInstanceThatSaidItIsLeavingIsSilentForEverUntilItBeatsAgain) {
  const Clock::time_point start{milliseconds(0)};
  HeartbeatBoard board(start);
  board.heard(beat_of("orrin", 1, 1000), start + milliseconds(100));
  v1::Heartbeat last = beat_of("orrin", 2, 2000);
  last.set_leaving(true);
  board.heard(last, start + milliseconds(200));
  EXPECT_EQ(board.silent_for("orrin", start + milliseconds(201)), Clock::duration::max());
  board.listen_again(start + milliseconds(300));  // a stall here changes nothing for it
  EXPECT_EQ(board.silent_for("orrin", start + milliseconds(301)), Clock::duration::max());
  board.heard(beat_of("orrin", 1, 9000), start + milliseconds(900));  // started again
  EXPECT_EQ(board.silent_for("orrin", start + milliseconds(1000)), milliseconds(100));
}

}  // namespace
}  // namespace yoke::failover
