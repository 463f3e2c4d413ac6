// The stream's rules on a real cluster: creating it twice, settings that differ, bad settings,
// a full stream refusing new messages, no single-message deletes, no stream for a subject.
#include <gtest/gtest-spi.h>
#include <gtest/gtest.h>

#include <functional>
#include <memory>
#include <thread>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/log_publisher.h"
#include "daemon/cluster/stream_status.h"
#include "tests/cluster/cluster_test_util.h"
#include "tools/nats_cluster/local_nats_cluster.h"

namespace yoke::cluster {
namespace {

using std::chrono::milliseconds;
using testing::connection_to;
using testing::log_stream;

class StreamRules : public testing::OneClusterPerSuite<StreamRules> {};

ClusterErrorKind kind_of(const std::function<void()>& action) {
  try {
    action();
  } catch (const ClusterError& error) {
    return error.kind();
  }
  ADD_FAILURE() << "no ClusterError";
  return ClusterErrorKind::other;
}

// A restart that fails at a scope's end is the test's failure, not the end of the binary: here
// the node is still running, which restart refuses.
TEST_F(StreamRules, AFailedRestartAtAScopesEndFailsTheTest) {
  EXPECT_NONFATAL_FAILURE({ const testing::RestartWhenDone guard(*cluster_, 0); },
                          "is still running");
}

TEST_F(StreamRules, EnsuringTheSameStreamAgainIsANoOpAndOtherSettingsAreNamed) {
  NatsConnection& connection = *connection_;
  const StreamSettings settings = log_stream("SAME", {"same.>"});
  ensure_stream(connection, settings);
  publish_and_wait(connection, "same.x", {}, "kept", milliseconds(5000));
  const StreamStatus again = ensure_stream(connection, settings);
  EXPECT_EQ(again.messages, 1u);

  StreamSettings other = settings;
  other.max_bytes = settings.max_bytes * 2;
  other.replicas = 1;
  try {
    ensure_stream(connection, other);
    FAIL() << "a stream with other settings was accepted";
  } catch (const ClusterError& error) {
    EXPECT_EQ(error.kind(), ClusterErrorKind::mismatch);
    const std::string text = error.what();
    EXPECT_NE(text.find("max_bytes"), std::string::npos) << text;
    EXPECT_NE(text.find("replicas 3 (asked: 1)"), std::string::npos) << text;
  }
  EXPECT_EQ(stream_status(connection, "SAME").replicas, 3);  // unchanged
}

TEST_F(StreamRules, BadSettingsAreRefusedBeforeAnyRequest) {
  NatsConnection& connection = *connection_;
  StreamSettings settings = log_stream("has.dot", {"x.>"});
  EXPECT_EQ(kind_of([&] { ensure_stream(connection, settings); }), ClusterErrorKind::invalid);
  settings = log_stream("NOSUBJECTS", {});
  EXPECT_EQ(kind_of([&] { ensure_stream(connection, settings); }), ClusterErrorKind::invalid);
  settings = log_stream("NOCAP", {"nocap.>"});
  settings.max_bytes = 0;
  EXPECT_EQ(kind_of([&] { ensure_stream(connection, settings); }), ClusterErrorKind::invalid);
  settings = log_stream("TOOMANY", {"toomany.>"}, 7);
  EXPECT_EQ(kind_of([&] { ensure_stream(connection, settings); }), ClusterErrorKind::invalid);
  EXPECT_EQ(kind_of([&] { stream_status(connection, "NEVERMADE"); }), ClusterErrorKind::not_found);
}

TEST_F(StreamRules, AFullStreamRefusesNewMessagesAndKeepsTheOldOnes) {
  NatsConnection& connection = *connection_;
  StreamSettings settings = log_stream("SMALL", {"small.>"});
  settings.max_bytes = 4096;
  ensure_stream(connection, settings);
  const std::string payload(300, 'p');
  std::uint64_t stored = 0;
  for (;;) {
    try {
      stored = publish_and_wait(connection, "small.pool", {{"yoke-n", std::to_string(stored)}},
                                payload, milliseconds(5000));
      ASSERT_LT(stored, 100u) << "the cap never refused a message";
    } catch (const ClusterError& error) {
      EXPECT_EQ(error.kind(), ClusterErrorKind::stream_full) << error.what();
      break;
    }
  }
  EXPECT_GT(stored, 5u);
  const StreamStatus status = stream_status(connection, "SMALL");
  EXPECT_EQ(status.first_sequence, 1u);  // nothing old was dropped
  EXPECT_EQ(status.last_sequence, stored);
  EXPECT_LE(status.bytes, 4096u);
}

TEST_F(StreamRules, SingleMessagesCannotBeDeleted) {
  NatsConnection& connection = *connection_;
  ensure_stream(connection, log_stream("NODELETE", {"nodelete.>"}));
  const std::uint64_t sequence = publish_and_wait(connection, "nodelete.a", {}, "x",
                                                  milliseconds(5000));
  jsErrCode code = jsErrCode(0);
  EXPECT_NE(js_DeleteMsg(connection.jetstream(), "NODELETE", sequence, nullptr, &code), NATS_OK);
  EXPECT_EQ(stream_status(connection, "NODELETE").messages, 1u);
}

TEST_F(StreamRules, APublishNoStreamTakesHasNoResponders) {
  NatsConnection& connection = *connection_;
  try {
    // The reply comes at once; the long wait only keeps a loaded machine from a Timeout.
    publish_and_wait(connection, "nobody.listens", {}, "x", milliseconds(10000));
    FAIL() << "a publish without a stream was acknowledged";
  } catch (const ClusterError& error) {
    EXPECT_EQ(error.kind(), ClusterErrorKind::no_responders) << error.what();
  }
}

TEST_F(StreamRules, APausedFollowerDoesNotStopPublishesAndCatchesUpWhenResumed) {
  NatsConnection& connection = *connection_;
  ensure_stream(connection, log_stream("PAUSED", {"paused.>"}));
  const int leader = cluster_->stream_leader("PAUSED", milliseconds(10000));
  // The connection is on node 0: pause a follower that is not node 0, so it keeps its server.
  int follower = 0;
  while (follower == leader || follower == 0) ++follower;
  cluster_->pause(follower);
  std::uint64_t last = 0;
  for (int k = 0; k < 10; ++k) {
    last = publish_and_wait(connection, "paused.a", {}, "while paused", milliseconds(5000));
  }
  EXPECT_EQ(last, 10u);
  cluster_->resume(follower);
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(20);
  for (;;) {
    const auto view = cluster_->stream_view(follower, "PAUSED");
    if (view && view->last_sequence == last) break;
    ASSERT_LT(std::chrono::steady_clock::now(), deadline) << "the resumed follower lags";
    std::this_thread::sleep_for(milliseconds(50));
  }
}

}  // namespace
}  // namespace yoke::cluster
