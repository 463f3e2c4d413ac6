// The diff feed (daemon/failover/diff_feed_publisher.h) on a real three-node nats-server
// cluster: diffs stored one per seq in order with their Yoke-Seq header and the publication's
// bytes; a new server resumes after the last stored diff and stores exactly the missing ones;
// a publish that fails (no stream takes the subject) is retried and fills the gap in order;
// trimming follows the pool's snapshots and keeps the newest diff. Label nats.
#include <chrono>
#include <cstdint>
#include <iostream>
#include <memory>
#include <thread>
#include <string>
#include <vector>

#include <gtest/gtest.h>
#include <nats/nats.h>

#include "daemon/cluster/stream_setup.h"
#include "daemon/failover/diff_feed_publisher.h"
#include "daemon/jetstream/diff_feed_message.h"
#include "daemon/jetstream/pool_subjects.h"
#include "tests/cluster/cluster_test_util.h"
#include "tests/cluster/synthetic_publication.h"
#include "yoke/v1/protocol.pb.h"
#include "yoke/v1/publish.pb.h"

namespace yoke::failover::testing {
namespace {

using cluster::testing::log_stream;
using cluster::testing::read_to_end;
using cluster::testing::synthetic_publication;
using std::chrono::milliseconds;

class DiffFeedOnCluster : public cluster::testing::OneClusterPerSuite<DiffFeedOnCluster> {
 protected:
  DiffFeedOnCluster() {
    static int counter = 0;
    ++counter;
    settings_.stream = "feed-" + std::to_string(counter);
    settings_.subject_prefix = "feed" + std::to_string(counter);
    settings_.publish_timeout = milliseconds(2000);
    settings_.retry_after = milliseconds(100);
    settings_.snapshots_kept = 2;
  }

  void make_stream() {
    cluster::ensure_stream(*connection_,
                           log_stream(settings_.stream, {settings_.subject_prefix + ".>"}));
  }

  void delete_stream() {
    jsErrCode code = jsErrCode(0);
    ASSERT_EQ(js_DeleteStream(connection_->jetstream(), settings_.stream.c_str(), nullptr, &code),
              NATS_OK);
  }

  std::string subject(const std::string& pool) const {
    return jetstream::PoolSubjects(settings_.subject_prefix).of_diffs(pool);
  }

  // Whether the feed says the pool's publishing is failing, within 10 s.
  static bool failing_soon(const DiffFeedPublisher& feed, const std::string& pool) {
    const auto deadline = std::chrono::steady_clock::now() + milliseconds(10000);
    while (!feed.status(pool).failing && std::chrono::steady_clock::now() < deadline) {
      std::this_thread::sleep_for(milliseconds(10));
    }
    return feed.status(pool).failing;
  }

  // The seqs stored on the pool's subject, in stream order; checks each message's header
  // against the diff it carries.
  std::vector<std::uint64_t> stored_seqs(const std::string& pool) {
    std::vector<std::uint64_t> seqs;
    for (const cluster::LogMessage& message :
         read_to_end(*connection_, settings_.stream, subject(pool), 1, milliseconds(1500))) {
      v1::Publication publication;
      EXPECT_TRUE(publication.ParseFromString(message.data));
      EXPECT_EQ(jetstream::diff_feed_seq(message), publication.diff().seq());
      EXPECT_EQ(publication.diff().pool(), pool);
      seqs.push_back(publication.diff().seq());
    }
    return seqs;
  }

  // stored_seqs() once it equals `expected` (a purge may reach the replica a new consumer
  // reads from a moment after it was acknowledged), or as it is after 5 s.
  std::vector<std::uint64_t> settled_seqs(const std::string& pool,
                                          const std::vector<std::uint64_t>& expected) {
    const auto deadline = std::chrono::steady_clock::now() + milliseconds(5000);
    std::vector<std::uint64_t> seqs = stored_seqs(pool);
    while (seqs != expected && std::chrono::steady_clock::now() < deadline) {
      std::this_thread::sleep_for(milliseconds(100));
      seqs = stored_seqs(pool);
    }
    return seqs;
  }

  static void publish_range(DiffFeedPublisher& feed, const std::string& pool, std::uint64_t first,
                            std::uint64_t last) {
    for (std::uint64_t seq = first; seq <= last; ++seq) {
      feed.publish(pool, seq, seq - 1, synthetic_publication(pool, seq, seq - 1),
                   std::chrono::steady_clock::now());
    }
  }

  static std::vector<std::uint64_t> range(std::uint64_t first, std::uint64_t last) {
    std::vector<std::uint64_t> seqs;
    for (std::uint64_t seq = first; seq <= last; ++seq) seqs.push_back(seq);
    return seqs;
  }

  DiffFeedSettings settings_;
};

TEST_F(DiffFeedOnCluster, StoresOneDiffPerSeqInOrderWithoutWaitingAndTheLastIsReadBack) {
  make_stream();
  DiffFeedPublisher feed(*connection_, settings_);
  EXPECT_EQ(feed.resume("berth.7"), 0u);  // nothing stored yet
  const auto start = std::chrono::steady_clock::now();
  publish_range(feed, "berth.7", 1, 400);
  const auto queued = std::chrono::steady_clock::now() - start;
  feed.publish("dock", 1, 0, synthetic_publication("dock", 1, 0),  // another pool, its own lane
               std::chrono::steady_clock::now());
  ASSERT_TRUE(feed.settle(milliseconds(30000)));
  const auto stored = std::chrono::steady_clock::now() - start;
  std::cout << "400 diffs: queued in "
            << std::chrono::duration_cast<std::chrono::microseconds>(queued).count()
            << " us, all stored after "
            << std::chrono::duration_cast<std::chrono::milliseconds>(stored).count() << " ms\n";
  EXPECT_EQ(stored_seqs("berth.7"), range(1, 400));
  EXPECT_EQ(stored_seqs("dock"), range(1, 1));
  const DiffFeedStatus status = feed.status("berth.7");
  EXPECT_TRUE(status.resumed);
  EXPECT_EQ(status.stored_seq, 400u);
  EXPECT_EQ(status.queued, 0u);
  EXPECT_EQ(status.failures, 0u);
  const auto last = jetstream::last_stored_diff(*connection_, settings_.stream, subject("berth.7"));
  ASSERT_TRUE(last.has_value());
  EXPECT_EQ(last->seq, 400u);
  // A seq already stored is not stored again.
  publish_range(feed, "berth.7", 399, 400);
  ASSERT_TRUE(feed.settle(milliseconds(5000)));
  EXPECT_EQ(stored_seqs("berth.7").size(), 400u);
}

TEST_F(DiffFeedOnCluster, ANewServerStoresExactlyTheDiffsAfterTheLastStored) {
  make_stream();
  {
    DiffFeedPublisher old_server(*connection_, settings_);
    ASSERT_EQ(old_server.resume("quay"), 0u);
    publish_range(old_server, "quay", 1, 5);
    ASSERT_TRUE(old_server.settle(milliseconds(10000)));
  }  // gone, as after a SIGKILL once its last diffs landed
  DiffFeedPublisher new_server(*connection_, settings_);
  EXPECT_EQ(new_server.resume("quay"), 5u);
  // A takeover republishes the follower's recent diffs: those up to 5 are skipped.
  publish_range(new_server, "quay", 2, 9);
  ASSERT_TRUE(new_server.settle(milliseconds(10000)));
  EXPECT_EQ(stored_seqs("quay"), range(1, 9));
}

// A server stalled past its successor's claim (SIGSTOP between a diff's staleness check and
// its write) still sends that diff: the stream refuses it, as the subject no longer ends where
// the stalled server saw it. Before the expectation, the subject held 1..8 then 6 again.
TEST_F(DiffFeedOnCluster, AStalledServersLateDiffIsRefusedBehindItsSuccessors) {
  make_stream();
  DiffFeedPublisher old_server(*connection_, settings_);
  ASSERT_EQ(old_server.resume("mole"), 0u);
  publish_range(old_server, "mole", 1, 5);
  ASSERT_TRUE(old_server.settle(milliseconds(10000)));
  DiffFeedPublisher new_server(*connection_, settings_);
  EXPECT_EQ(new_server.resume("mole"), 5u);
  publish_range(new_server, "mole", 6, 8);
  ASSERT_TRUE(new_server.settle(milliseconds(10000)));
  publish_range(old_server, "mole", 6, 6);
  EXPECT_TRUE(failing_soon(old_server, "mole"));
  EXPECT_EQ(stored_seqs("mole"), range(1, 8));
}

TEST_F(DiffFeedOnCluster, AStalledServersFirstDiffIsRefusedOnceASuccessorStoredAny) {
  // Both read the subject empty; the successor stores 1..3 first.
  make_stream();
  DiffFeedPublisher old_server(*connection_, settings_);
  ASSERT_EQ(old_server.resume("vole"), 0u);
  DiffFeedPublisher new_server(*connection_, settings_);
  ASSERT_EQ(new_server.resume("vole"), 0u);
  publish_range(new_server, "vole", 1, 3);
  ASSERT_TRUE(new_server.settle(milliseconds(10000)));
  publish_range(old_server, "vole", 1, 1);
  EXPECT_TRUE(failing_soon(old_server, "vole"));
  EXPECT_EQ(stored_seqs("vole"), range(1, 3));
}

TEST_F(DiffFeedOnCluster, AFailedPublishIsRetriedAndTheGapFilledInOrder) {
  make_stream();
  DiffFeedPublisher feed(*connection_, settings_);
  ASSERT_EQ(feed.resume("reef"), 0u);
  publish_range(feed, "reef", 1, 2);
  ASSERT_TRUE(feed.settle(milliseconds(10000)));
  delete_stream();  // no stream takes the subject: the next publishes fail
  publish_range(feed, "reef", 3, 6);
  ASSERT_TRUE(failing_soon(feed, "reef"));
  EXPECT_FALSE(feed.settle(milliseconds(300)));  // keeps serving; retries meanwhile fail
  make_stream();                                 // the stream is back (empty)
  publish_range(feed, "reef", 7, 8);             // queued behind the failed ones
  ASSERT_TRUE(feed.settle(milliseconds(20000)));
  EXPECT_GE(feed.status("reef").failures, 1u);
  EXPECT_EQ(stored_seqs("reef"), range(3, 8));  // 1 and 2 went with the old stream
}

TEST_F(DiffFeedOnCluster, DiffsBeforeUntilTheReadWorksAreQueuedThenSent) {
  // The stream does not exist when the pool is taken: resume() cannot read its end.
  DiffFeedPublisher feed(*connection_, settings_);
  EXPECT_FALSE(feed.resume("tide").has_value());
  publish_range(feed, "tide", 1, 3);
  feed.pump(std::chrono::steady_clock::now());
  EXPECT_FALSE(feed.status("tide").resumed);
  make_stream();
  ASSERT_TRUE(feed.settle(milliseconds(20000)));
  EXPECT_EQ(stored_seqs("tide"), range(1, 3));
}

TEST_F(DiffFeedOnCluster, ALateDiffIsStoredOnlyWhileThePoolIsStillServedHere) {
  make_stream();
  bool served = true;
  int asked = 0;
  settings_.stale_after = milliseconds(200);
  settings_.still_serving = [&](const std::string&) {
    ++asked;
    return served;
  };
  DiffFeedPublisher feed(*connection_, settings_);
  ASSERT_EQ(feed.resume("lock"), 0u);
  publish_range(feed, "lock", 1, 2);  // fresh: sent without asking
  ASSERT_TRUE(feed.settle(milliseconds(10000)));
  EXPECT_EQ(asked, 0);
  // Its window closed a second ago (the process stalled): not sent until checked.
  const auto long_ago = std::chrono::steady_clock::now() - milliseconds(1000);
  feed.publish("lock", 3, 2, synthetic_publication("lock", 3, 2), long_ago);
  EXPECT_EQ(feed.status("lock").queued, 1u);
  ASSERT_TRUE(feed.settle(milliseconds(10000)));  // settle() pumps: asks, then sends
  EXPECT_EQ(asked, 1);
  EXPECT_EQ(stored_seqs("lock"), range(1, 3));
  // Claimed elsewhere meanwhile: the late diffs are dropped, not stored.
  served = false;
  feed.publish("lock", 4, 3, synthetic_publication("lock", 4, 3), long_ago);
  feed.publish("lock", 5, 4, synthetic_publication("lock", 5, 4), long_ago);
  ASSERT_TRUE(feed.settle(milliseconds(10000)));
  EXPECT_EQ(asked, 2);
  EXPECT_EQ(stored_seqs("lock"), range(1, 3));
}

TEST_F(DiffFeedOnCluster, TrimmingFollowsTheOldestSnapshotKeptAndKeepsTheNewestDiff) {
  make_stream();
  DiffFeedPublisher feed(*connection_, settings_);
  ASSERT_EQ(feed.resume("wharf"), 0u);
  publish_range(feed, "wharf", 1, 10);
  ASSERT_TRUE(feed.settle(milliseconds(10000)));
  feed.snapshot_written("wharf", 3);  // one snapshot kept of two: nothing covered for sure
  EXPECT_EQ(stored_seqs("wharf"), range(1, 10));
  feed.snapshot_written("wharf", 6);  // the oldest kept is at 3: diffs 1..3 go
  EXPECT_EQ(settled_seqs("wharf", range(4, 10)), range(4, 10));
  feed.snapshot_written("wharf", 10);  // oldest kept at 6
  EXPECT_EQ(settled_seqs("wharf", range(7, 10)), range(7, 10));
  feed.snapshot_written("wharf", 10);  // oldest kept at 10: the newest diff stays
  EXPECT_EQ(settled_seqs("wharf", range(10, 10)), range(10, 10));
  const auto last = jetstream::last_stored_diff(*connection_, settings_.stream, subject("wharf"));
  ASSERT_TRUE(last.has_value());
  EXPECT_EQ(last->seq, 10u);
}

}  // namespace
}  // namespace yoke::failover::testing
