// `yoke watch --cluster` against a real three-node nats-server cluster (tools/nats_cluster):
// the diffs are stored by the daemon's diff feed (daemon/failover/diff_feed_publisher.h) and
// the watcher must print what `yoke watch --publish` prints for the same publications; it
// follows the pool across a failover of the publishing daemon (the new one stores exactly the
// missing diffs), resumes from a seq, prints only new diffs without --from-seq, and notes a
// gap. Label nats.
#include <gtest/gtest.h>

#include <chrono>
#include <memory>
#include <string>
#include <thread>
#include <vector>

#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/stream_setup.h"
#include "daemon/failover/diff_feed_publisher.h"
#include "fake_daemon.h"
#include "run_yoke.h"
#include "tools/nats_cluster/local_nats_cluster.h"
#include "tests/cluster/synthetic_publication.h"
#include "yoke/v1/protocol.pb.h"
#include "yoke/v1/publish.pb.h"

namespace yoke::cli::testing {
namespace {

using cluster::testing::synthetic_publication;
using std::chrono::milliseconds;

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> lines;
  for (std::size_t start = 0, end; (end = text.find('\n', start)) != std::string::npos;
       start = end + 1) {
    lines.push_back(text.substr(start, end - start));
  }
  return lines;
}

// The "seq" of each line.
std::vector<std::uint64_t> seqs_of(const std::string& text) {
  std::vector<std::uint64_t> seqs;
  for (const std::string& line : lines_of(text)) {
    const std::size_t at = line.find("\"seq\":");
    seqs.push_back(at == std::string::npos ? 0 : std::stoull(line.substr(at + 6)));
  }
  return seqs;
}

std::vector<std::uint64_t> range(std::uint64_t first, std::uint64_t last) {
  std::vector<std::uint64_t> seqs;
  for (std::uint64_t seq = first; seq <= last; ++seq) seqs.push_back(seq);
  return seqs;
}

class WatchFromCluster : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    cluster_ = std::make_unique<nats_cluster::LocalNatsCluster>();
    cluster::ConnectionSettings settings;
    settings.servers = cluster_->client_urls();
    settings.name = "yoke-watch-cluster-test";
    connection_ = std::make_unique<cluster::NatsConnection>(std::move(settings));
    cluster::StreamSettings stream;
    stream.name = kStream;
    stream.subjects = {std::string(kPrefix) + ".>"};
    stream.replicas = 3;
    stream.max_bytes = 32 << 20;
    cluster::ensure_stream(*connection_, stream);
  }
  static void TearDownTestSuite() {
    connection_.reset();
    cluster_.reset();
  }

  static std::unique_ptr<failover::DiffFeedPublisher> feed() {
    failover::DiffFeedSettings settings;
    settings.stream = kStream;
    settings.subject_prefix = kPrefix;
    settings.publish_timeout = milliseconds(3000);
    return std::make_unique<failover::DiffFeedPublisher>(*connection_, settings);
  }

  static void publish_range(failover::DiffFeedPublisher& feed, const std::string& pool,
                            std::uint64_t first, std::uint64_t last) {
    for (std::uint64_t seq = first; seq <= last; ++seq) {
      feed.publish(pool, seq, seq - 1, synthetic_publication(pool, seq, seq - 1),
                   std::chrono::steady_clock::now());
    }
  }

  static std::vector<std::string> watch_args(const std::string& pool,
                                             const std::vector<std::string>& extra) {
    std::vector<std::string> args = {"watch", "--cluster", servers(), "--stream", kStream,
                                     "--subject-prefix", kPrefix, "--pool", pool,
                                     "--timeout-ms", "15000"};
    args.insert(args.end(), extra.begin(), extra.end());
    return args;
  }

  static std::string servers() {
    std::string text;
    for (const std::string& url : cluster_->client_urls()) text += (text.empty() ? "" : ",") + url;
    return text;
  }

  static constexpr const char* kStream = "watch-feed";
  static constexpr const char* kPrefix = "w1.yoke";
  static inline std::unique_ptr<nats_cluster::LocalNatsCluster> cluster_;
  static inline std::unique_ptr<cluster::NatsConnection> connection_;
};

TEST_F(WatchFromCluster, PrintsWhatThePublicationSocketPrints) {
  {
    const auto publisher = feed();
    ASSERT_EQ(publisher->resume("quay"), 0u);
    publish_range(*publisher, "quay", 1, 6);
    ASSERT_TRUE(publisher->settle(milliseconds(10000)));
  }
  TempDir dir;
  const RunResult stored = run_yoke(dir, watch_args("quay", {"--from-seq", "1", "--count", "6"}));
  ASSERT_EQ(stored.exit_code, 0) << stored.err;
  EXPECT_EQ(seqs_of(stored.out), range(1, 6));

  std::vector<FakePublisher::Message> messages;
  for (std::uint64_t seq = 1; seq <= 6; ++seq) {
    messages.emplace_back("quay", synthetic_publication("quay", seq, seq - 1));
  }
  const std::string endpoint = "ipc://" + dir.file("publish");
  FakePublisher socket(endpoint, messages);
  const RunResult published =
      run_yoke(dir, {"watch", "--publish", endpoint, "--pool", "quay", "--count", "6",
                     "--timeout-ms", "5000"});
  ASSERT_EQ(published.exit_code, 0) << published.err;
  EXPECT_EQ(stored.out, published.out);
  EXPECT_EQ(stored.err, published.err);

  // From a later seq: the diffs before it are skipped.
  const RunResult later = run_yoke(dir, watch_args("quay", {"--from-seq", "4", "--count", "3"}));
  ASSERT_EQ(later.exit_code, 0) << later.err;
  EXPECT_EQ(seqs_of(later.out), range(4, 6));
}

TEST_F(WatchFromCluster, FollowsThePoolAcrossAFailoverOfThePublishingDaemon) {
  RunResult live;
  std::thread watcher([&live] {
    TempDir dir;
    live = run_yoke(dir, watch_args("dock", {"--from-seq", "1", "--count", "9"}));
  });
  {
    const auto old_server = feed();
    ASSERT_EQ(old_server->resume("dock"), 0u);
    publish_range(*old_server, "dock", 1, 4);
    ASSERT_TRUE(old_server->settle(milliseconds(10000)));
  }  // the old server is gone
  std::this_thread::sleep_for(milliseconds(300));
  const auto new_server = feed();
  EXPECT_EQ(new_server->resume("dock"), 4u);
  publish_range(*new_server, "dock", 2, 9);  // the takeover's republication, then new diffs
  ASSERT_TRUE(new_server->settle(milliseconds(10000)));
  watcher.join();
  ASSERT_EQ(live.exit_code, 0) << live.err;
  EXPECT_EQ(seqs_of(live.out), range(1, 9));
  EXPECT_EQ(live.err, "");

  // A watcher started after the failover catches up from the stream.
  TempDir dir;
  const RunResult late = run_yoke(dir, watch_args("dock", {"--from-seq", "3", "--count", "7"}));
  ASSERT_EQ(late.exit_code, 0) << late.err;
  EXPECT_EQ(seqs_of(late.out), range(3, 9));
}

TEST_F(WatchFromCluster, WithoutFromSeqOnlyNewDiffsArePrinted) {
  const auto publisher = feed();
  ASSERT_EQ(publisher->resume("reef"), 0u);
  publish_range(*publisher, "reef", 1, 3);
  ASSERT_TRUE(publisher->settle(milliseconds(10000)));
  RunResult live;
  std::thread watcher([&live] {
    TempDir dir;
    live = run_yoke(dir, watch_args("reef", {"--count", "2"}));
  });
  std::this_thread::sleep_for(milliseconds(1500));  // the watcher has read where the subject ends
  publish_range(*publisher, "reef", 4, 5);
  ASSERT_TRUE(publisher->settle(milliseconds(10000)));
  watcher.join();
  ASSERT_EQ(live.exit_code, 0) << live.err;
  EXPECT_EQ(seqs_of(live.out), range(4, 5));
}

TEST_F(WatchFromCluster, AGapIsNotedAndTheWatchGoesOn) {
  const auto publisher = feed();
  ASSERT_EQ(publisher->resume("tide"), 0u);
  publish_range(*publisher, "tide", 1, 2);
  publisher->publish("tide", 5, 4, synthetic_publication("tide", 5, 4),  // 3 and 4 never stored
                     std::chrono::steady_clock::now());
  ASSERT_TRUE(publisher->settle(milliseconds(10000)));
  TempDir dir;
  const RunResult result = run_yoke(dir, watch_args("tide", {"--from-seq", "1", "--count", "3"}));
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(seqs_of(result.out), (std::vector<std::uint64_t>{1, 2, 5}));
  EXPECT_EQ(result.err,
            "note: pool tide: diff 5 follows seq 4, but the last seq printed is 2; the diffs "
            "between are missing\n");
}

TEST_F(WatchFromCluster, ClearErrorsForAWrongStreamOrOptions) {
  TempDir dir;
  const RunResult wrong = run_yoke(
      dir, {"watch", "--cluster", servers(), "--stream", "no-such", "--pool", "quay"});
  EXPECT_EQ(wrong.exit_code, 2);
  EXPECT_NE(wrong.err.find("no JetStream stream 'no-such'"), std::string::npos) << wrong.err;
  const RunResult both = run_yoke(dir, watch_args("quay", {"--from-seq", "1", "--catch-up"}));
  EXPECT_EQ(both.exit_code, 2);
  EXPECT_NE(both.err.find("--from-seq and --catch-up do not go together"), std::string::npos)
      << both.err;
  const RunResult alone = run_yoke(dir, {"watch", "--from-seq", "3"});
  EXPECT_EQ(alone.exit_code, 2);
  EXPECT_NE(alone.err.find("--from-seq requires --cluster"), std::string::npos) << alone.err;
}

}  // namespace
}  // namespace yoke::cli::testing
