// `yoke send`, `yoke query` and `yoke watch` against two stand-in daemons of a cluster
// (fake_daemon.h): one refuses with NOT_OWNER (naming the other, or nobody), stays silent, or
// both publish a pool's diffs. The serving daemon keeps a retry ledger in small, so a batch
// the client resends there under its old number is seen as the same batch.
#include <gtest/gtest.h>

#include <chrono>
#include <map>
#include <optional>
#include <string>
#include <thread>
#include <vector>

#include <nlohmann/json.hpp>

#include "fake_daemon.h"
#include "run_yoke.h"
#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/publish.pb.h"
#include "yoke/v1/query.pb.h"

namespace yoke::cli::testing {
namespace {

using yoke::v1::EventBatch;

constexpr const char* kTwoBatches = "set 1 2 5\ncommit\nset 2 3 7\n";

// The serving daemon's ingest side for one pool: applies each client batch once, in order.
class Ledger {
 public:
  std::optional<std::string> answer(const std::string& bytes) {
    yoke::v1::IngestRequest request;
    EXPECT_TRUE(request.ParseFromString(bytes));
    const EventBatch& batch = request.batch();
    yoke::v1::IngestReply reply;
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    yoke::v1::Ack& ack = *reply.mutable_ack();
    ack.set_client_id(batch.client_id());
    ack.set_client_batch(batch.client_batch());
    ack.set_pool(batch.pool());
    std::uint64_t& last = last_batch_[batch.client_id()];
    if (batch.client_batch() <= last) {
      ack.mutable_accepted()->set_seq(seq_);
      ack.mutable_accepted()->set_duplicate(true);
    } else {
      last = batch.client_batch();
      ack.mutable_accepted()->set_seq(++seq_);
    }
    return reply.SerializeAsString();
  }

 private:
  std::map<std::string, std::uint64_t> last_batch_;
  std::uint64_t seq_ = 0;
};

FakeRouter::Answer ledger_answer(Ledger& ledger) {
  return [&ledger](const std::string& bytes) { return ledger.answer(bytes); };
}

std::vector<EventBatch> batches_of(const FakeRouter& peer) {
  std::vector<EventBatch> batches;
  for (const std::string& bytes : peer.requests()) {
    yoke::v1::IngestRequest request;
    EXPECT_TRUE(request.ParseFromString(bytes));
    batches.push_back(request.batch());
  }
  return batches;
}

struct Cluster {
  TempDir dir;
  std::string east_ingest = "ipc://" + dir.file("east-ingest");
  std::string east_query = "ipc://" + dir.file("east-query");
  std::string west_ingest = "ipc://" + dir.file("west-ingest");
  std::string west_query = "ipc://" + dir.file("west-query");
};

TEST(OwnerFollowing, SendResendsTheSameBatchesToTheOwnerNamed) {
  Cluster cluster;
  Ledger ledger;
  FakeRouter east(cluster.east_ingest,
                  ingest_not_owner(owner_at("west", cluster.west_ingest, cluster.west_query)));
  FakeRouter west(cluster.west_ingest, ledger_answer(ledger));
  const RunResult result =
      run_yoke(cluster.dir, {"send", cluster.dir.write("s.events", kTwoBatches), "--pool",
                             "quillory", "--ingest", cluster.east_ingest, "--client-id", "c1"});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(result.err, "note: pool quillory moved to instance west (" + cluster.west_ingest +
                            ")\n");
  const auto out = nlohmann::json::parse(result.out);
  EXPECT_EQ(out["first_seq"], 1);
  EXPECT_EQ(out["last_seq"], 2);
  EXPECT_EQ(out["duplicates"], 0);

  // What east refused went to west under the same client id and numbers, in order.
  const auto refused = batches_of(east);
  const auto taken = batches_of(west);
  ASSERT_FALSE(refused.empty());
  ASSERT_EQ(taken.size(), 2u);
  EXPECT_EQ(taken[0].client_id(), "c1");
  EXPECT_EQ(taken[0].client_batch(), refused[0].client_batch());
  EXPECT_EQ(taken[1].client_batch(), taken[0].client_batch() + 1);
  EXPECT_EQ(taken[1].after_batch(), taken[0].client_batch());
}

TEST(OwnerFollowing, SendKeepsEachBatchOnceAcrossAHandover) {
  Cluster cluster;
  // One ledger for both: the shared log. East applies the first batch, then hands the pool
  // over to west and refuses the rest.
  Ledger ledger;
  int east_answers = 0;
  const auto handover =
      ingest_not_owner(owner_at("west", cluster.west_ingest, cluster.west_query));
  FakeRouter east(cluster.east_ingest, [&](const std::string& bytes) {
    return east_answers++ == 0 ? ledger.answer(bytes) : handover(bytes);
  });
  FakeRouter west(cluster.west_ingest, ledger_answer(ledger));
  const RunResult result =
      run_yoke(cluster.dir, {"send", cluster.dir.write("s.events", "add 1\ncommit\nadd 2\n"
                                                                   "commit\nadd 3\n"),
                             "--pool", "quillory", "--ingest", cluster.east_ingest});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const auto out = nlohmann::json::parse(result.out);
  EXPECT_EQ(out["first_seq"], 1);
  EXPECT_EQ(out["last_seq"], 3);
  EXPECT_EQ(out["duplicates"], 0);
  const auto sent_east = batches_of(east);
  const auto sent_west = batches_of(west);
  ASSERT_EQ(sent_west.size(), 2u);
  // West continues the chain east started.
  EXPECT_EQ(sent_west[0].after_batch(), sent_east[0].client_batch());
  EXPECT_EQ(sent_west[1].after_batch(), sent_west[0].client_batch());
}

TEST(OwnerFollowing, SendWithoutAnOwnerNamedTriesTheNextEndpoint) {
  Cluster cluster;
  Ledger ledger;
  FakeRouter east(cluster.east_ingest, ingest_not_owner(std::nullopt));
  FakeRouter west(cluster.west_ingest, ledger_answer(ledger));
  // A comma list and a repeated option name the same endpoints.
  for (const std::vector<std::string>& endpoints :
       {std::vector<std::string>{"--ingest", cluster.east_ingest + "," + cluster.west_ingest},
        std::vector<std::string>{"--ingest", cluster.east_ingest, "--ingest",
                                 cluster.west_ingest}}) {
    std::vector<std::string> args = {"send", cluster.dir.write("s.events", kTwoBatches),
                                     "--pool", "quillory"};
    args.insert(args.end(), endpoints.begin(), endpoints.end());
    const RunResult result = run_yoke(cluster.dir, args);
    ASSERT_EQ(result.exit_code, 0) << result.err;
    EXPECT_EQ(result.err, "");  // no owner named: nothing moved
  }
  EXPECT_EQ(batches_of(west).size(), 4u);
}

TEST(OwnerFollowing, SendLeavesASilentEndpointForTheNext) {
  Cluster cluster;
  Ledger ledger;
  // East is bound but never answers.
  FakeRouter east(cluster.east_ingest, [](const std::string&) { return std::nullopt; });
  FakeRouter west(cluster.west_ingest, ledger_answer(ledger));
  const RunResult result = run_yoke(
      cluster.dir, {"send", cluster.dir.write("s.events", kTwoBatches), "--ingest",
                    cluster.east_ingest + "," + cluster.west_ingest, "--timeout-ms", "200"});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(nlohmann::json::parse(result.out)["last_seq"], 2);
  EXPECT_FALSE(batches_of(east).empty());
}

TEST(OwnerFollowing, SendGivesUpWhenNoDaemonServesThePool) {
  Cluster cluster;
  FakeRouter east(cluster.east_ingest, ingest_not_owner(std::nullopt));
  FakeRouter west(cluster.west_ingest, ingest_not_owner(std::nullopt));
  const auto start = std::chrono::steady_clock::now();
  const RunResult result = run_yoke(
      cluster.dir, {"send", cluster.dir.write("s.events", kTwoBatches), "--pool", "quillory",
                    "--ingest", cluster.east_ingest + "," + cluster.west_ingest,
                    "--owner-wait-ms", "400"});
  const auto elapsed = std::chrono::steady_clock::now() - start;
  EXPECT_EQ(result.exit_code, 4) << result.err;
  EXPECT_EQ(result.err, "error: no daemon served pool quillory within 400 ms (tried " +
                            cluster.east_ingest + ", " + cluster.west_ingest +
                            "; last answer: NOT_OWNER: no instance serves pool quillory now)\n");
  EXPECT_LT(elapsed, std::chrono::seconds(5));
  // Both were asked again and again, with backoffs between.
  EXPECT_GE(batches_of(east).size(), 2u);
  EXPECT_GE(batches_of(west).size(), 2u);
}

yoke::v1::QueryReply summary_of(const yoke::v1::QueryRequest& request, std::uint64_t seq) {
  yoke::v1::QueryReply reply;
  reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
  reply.set_request_id(request.request_id());
  reply.set_pool(request.pool());
  reply.mutable_summary()->set_seq(seq);
  reply.mutable_summary()->set_mode(yoke::v1::MODE_MAX_WEIGHT);
  return reply;
}

FakeRouter::Answer summary_at(std::uint64_t seq) {
  return [seq](const std::string& bytes) -> std::optional<std::string> {
    yoke::v1::QueryRequest request;
    if (!request.ParseFromString(bytes)) return std::nullopt;
    return summary_of(request, seq).SerializeAsString();
  };
}

TEST(OwnerFollowing, QueryAsksTheOwnerNamed) {
  Cluster cluster;
  FakeRouter east(cluster.east_query,
                  query_not_owner(owner_at("west", cluster.west_ingest, cluster.west_query)));
  FakeRouter west(cluster.west_query, summary_at(17));
  const RunResult result = run_yoke(
      cluster.dir, {"query", "summary", "--pool", "quillory", "--query", cluster.east_query});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(result.err,
            "note: pool quillory moved to instance west (" + cluster.west_query + ")\n");
  EXPECT_EQ(nlohmann::json::parse(result.out)["seq"], 17);
  EXPECT_EQ(east.requests().size(), 1u);
  EXPECT_EQ(west.requests().size(), 1u);
}

TEST(OwnerFollowing, QueryTriesTheNextEndpointWhenNoneOwnsOrOneIsSilent) {
  Cluster cluster;
  FakeRouter east(cluster.east_query, query_not_owner(std::nullopt));
  FakeRouter west(cluster.west_query, summary_at(5));
  RunResult result =
      run_yoke(cluster.dir, {"query", "summary", "--query",
                             cluster.east_query + "," + cluster.west_query});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(nlohmann::json::parse(result.out)["seq"], 5);

  // A silent first endpoint: the second answers after the timeout.
  const std::string silent = "ipc://" + cluster.dir.file("silent-query");
  FakeRouter quiet(silent, [](const std::string&) { return std::nullopt; });
  result = run_yoke(cluster.dir, {"query", "summary", "--query", silent, "--query",
                                  cluster.west_query, "--timeout-ms", "150"});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(nlohmann::json::parse(result.out)["seq"], 5);
}

TEST(OwnerFollowing, QueryGivesUpAfterTheOwnerWait) {
  Cluster cluster;
  FakeRouter east(cluster.east_query, query_not_owner(std::nullopt));
  const RunResult result =
      run_yoke(cluster.dir, {"query", "summary", "--pool", "quillory", "--query",
                             cluster.east_query, "--owner-wait-ms", "200"});
  EXPECT_EQ(result.exit_code, 4);
  EXPECT_EQ(result.err, "error: no daemon served pool quillory within 200 ms (tried " +
                            cluster.east_query +
                            "; last answer: NOT_OWNER: no instance serves pool quillory now)\n");
}

using Message = FakePublisher::Message;

Message diff_message(std::uint64_t seq, std::uint64_t prev_seq) {
  yoke::v1::Publication publication;
  publication.set_version(yoke::v1::PROTOCOL_VERSION_1);
  yoke::v1::Diff& diff = *publication.mutable_diff();
  diff.set_pool("quillory");
  diff.set_seq(seq);
  diff.set_prev_seq(prev_seq);
  diff.set_weight(static_cast<std::int64_t>(seq));
  return {"quillory", publication.SerializeAsString()};
}

std::vector<std::uint64_t> printed_seqs(const std::string& out) {
  std::vector<std::uint64_t> seqs;
  for (std::size_t start = 0, end; (end = out.find('\n', start)) != std::string::npos;
       start = end + 1) {
    const auto line = nlohmann::json::parse(out.substr(start, end - start));
    seqs.push_back(line.contains("catch_up") ? 0 : line["seq"].get<std::uint64_t>());
  }
  return seqs;
}

TEST(OwnerFollowing, WatchPrintsEachDiffOfSeveralPublishersOnceInSeqOrder) {
  TempDir dir;
  const std::string east = "ipc://" + dir.file("east-publish");
  const std::string west = "ipc://" + dir.file("west-publish");
  // East served seqs 1..3 and went; west took over and published 2..3 again (the diffs its
  // watchers may have missed), then 4 and 5. West's 5 comes before its 4, as if from an
  // east that still had it queued: printed in seq order all the same.
  // West starts once east has published: a watcher's first diff is where it starts.
  FakePublisher east_publisher(east, {diff_message(1, 0), diff_message(2, 1), diff_message(3, 2)});
  std::optional<FakePublisher> west_publisher;
  std::thread later([&] {
    if (!east_publisher.wait_for_subscriber(std::chrono::seconds(5))) return;
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
    west_publisher.emplace(west, std::vector<Message>{diff_message(2, 1), diff_message(3, 2),
                                                      diff_message(5, 4), diff_message(4, 3)});
  });
  const RunResult result = run_yoke(
      dir, {"watch", "--pool", "quillory", "--publish", east + "," + west, "--count", "5",
            "--timeout-ms", "5000"});
  later.join();
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(printed_seqs(result.out), (std::vector<std::uint64_t>{1, 2, 3, 4, 5}));
}

TEST(OwnerFollowing, WatchOfSeveralPublishersStillReportsARealGap) {
  TempDir dir;
  const std::string east = "ipc://" + dir.file("east-publish");
  const std::string west = "ipc://" + dir.file("west-publish");
  const std::string query = "ipc://" + dir.file("west-query");
  // Nobody publishes seq 3: after the reorder wait, the watcher catches up at seq 3.
  FakePublisher east_publisher(east, {diff_message(1, 0), diff_message(2, 1)});
  FakePublisher west_publisher(west, {diff_message(4, 3), diff_message(5, 4)});
  int asked = 0;
  FakeRouter west_query(query, [&asked](const std::string& bytes) -> std::optional<std::string> {
    yoke::v1::QueryRequest request;
    if (!request.ParseFromString(bytes)) return std::nullopt;
    yoke::v1::QueryReply reply;
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    reply.set_request_id(request.request_id());
    reply.set_pool(request.pool());
    reply.mutable_matching()->set_seq(asked++ == 0 ? 0 : 3);
    return reply.SerializeAsString();
  });
  const RunResult result =
      run_yoke(dir, {"watch", "--pool", "quillory", "--publish", east, "--publish", west,
                     "--catch-up", "--query", query, "--count", "4", "--timeout-ms", "5000"});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  // catch-up, 1, 2, (gap) catch-up at 3, 4, 5.
  EXPECT_EQ(printed_seqs(result.out), (std::vector<std::uint64_t>{0, 1, 2, 0, 4, 5}));
  EXPECT_NE(
      result.err.find("note: pool quillory: diff 4 follows seq 3, but the last seq held is 2"),
      std::string::npos)
      << result.err;
}

}  // namespace
}  // namespace yoke::cli::testing
