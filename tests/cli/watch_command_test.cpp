// `yoke watch` end to end against a publication peer (an XPUB that publishes once the watcher
// has subscribed, fake_daemon.h) and, for --catch-up, a query peer: the JSON line per diff, the
// exact-topic filter, the catch-up with a gap, the timeout and the signals.
#include <gtest/gtest.h>

#include <fcntl.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <string>
#include <thread>
#include <utility>
#include <vector>

#include "fake_daemon.h"
#include "run_yoke.h"
#include "yoke/v1/publish.pb.h"
#include "yoke/v1/query.pb.h"

namespace yoke::cli::testing {
namespace {

using Message = FakePublisher::Message;

// A publication of a diff from prev_seq to seq, adding the pair {seq, seq + 1} of weight seq.
Message diff_message(const std::string& pool, std::uint64_t seq, std::uint64_t prev_seq) {
  yoke::v1::Publication publication;
  publication.set_version(yoke::v1::PROTOCOL_VERSION_1);
  yoke::v1::Diff& diff = *publication.mutable_diff();
  diff.set_pool(pool);
  diff.set_seq(seq);
  diff.set_prev_seq(prev_seq);
  diff.set_weight(static_cast<std::int64_t>(seq) * 10);
  diff.set_pairs(seq);
  yoke::v1::Pair& pair = *diff.add_added();
  pair.set_a(seq);
  pair.set_b(seq + 1);
  pair.set_weight(static_cast<std::int64_t>(seq));
  return {pool, publication.SerializeAsString()};
}

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> lines;
  for (std::size_t start = 0, end; (end = text.find('\n', start)) != std::string::npos;
       start = end + 1) {
    lines.push_back(text.substr(start, end - start));
  }
  return lines;
}

// The compact line of a diff made by diff_message with zero timings and stats.
std::string diff_line(const std::string& pool, std::uint64_t seq, std::uint64_t prev_seq) {
  const std::string s = std::to_string(seq);
  return "{\"pool\":\"" + pool + "\",\"seq\":" + s + ",\"prev_seq\":" + std::to_string(prev_seq) +
         ",\"weight\":" + s + "0,\"pairs\":" + s +
         ",\"no_perfect_matching\":false,\"removed\":[],\"added\":[[" + s + "," +
         std::to_string(seq + 1) + "," + s +
         "]],\"repair_us\":0,\"commit_to_publish_us\":0,\"publish_unix_us\":0,\"stats\":{"
         "\"events\":0,\"roots\":0,\"searches\":0,\"augmentations\":0,\"blossoms_dissolved\":0,"
         "\"vertices_touched\":0,\"initial_solve\":false}}";
}

TEST(WatchCommand, PrintsTheDiffsOfItsPoolOnly) {
  TempDir dir;
  const std::string endpoint = "ipc://" + dir.file("publish");
  // Topics sharing the pool's name as a prefix reach the subscriber and must be dropped.
  FakePublisher publisher(endpoint, {diff_message("default-2", 1, 0), diff_message("default", 1, 0),
                                     diff_message("defaults", 7, 6), diff_message("default", 2, 1),
                                     diff_message("default", 3, 2)});
  const RunResult result = run_yoke(dir, {"watch", "--publish", endpoint, "--count", "2"});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(result.out, diff_line("default", 1, 0) + "\n" + diff_line("default", 2, 1) + "\n");
  EXPECT_EQ(publisher.subscription(), "default");
}

TEST(WatchCommand, CatchUpStartsFromTheMatchingAndRefetchesAfterAGap) {
  TempDir dir;
  const std::string publish = "ipc://" + dir.file("publish");
  const std::string query = "ipc://" + dir.file("query");
  // Matching at seq 5: diff 4 is older and dropped, 6 follows; 8 follows 7, which was missed,
  // so the matching is fetched again (now at 8) and 9 follows it.
  FakePublisher publisher(publish, {diff_message("city", 4, 3), diff_message("city", 6, 5),
                                    diff_message("city", 8, 7), diff_message("city", 9, 8)});
  std::vector<std::uint64_t> matching_seqs = {5, 8};
  std::size_t asked = 0;
  FakeRouter query_peer(query, [&](const std::string& bytes) -> std::optional<std::string> {
    yoke::v1::QueryRequest request;
    EXPECT_TRUE(request.ParseFromString(bytes));
    EXPECT_TRUE(request.has_matching());
    EXPECT_EQ(request.pool(), "city");
    yoke::v1::QueryReply reply;
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    reply.set_request_id(request.request_id());
    reply.set_pool("city");
    yoke::v1::Matching& matching = *reply.mutable_matching();
    matching.set_seq(matching_seqs.at(std::min(asked++, matching_seqs.size() - 1)));
    matching.set_weight(-3);
    matching.set_mode(yoke::v1::MODE_PERFECT);
    yoke::v1::Pair& pair = *matching.add_matching();
    pair.set_a(1);
    pair.set_b(2);
    pair.set_weight(-3);
    return reply.SerializeAsString();
  });
  const RunResult result = run_yoke(dir, {"watch", "--pool", "city", "--publish", publish,
                                          "--query", query, "--catch-up", "--count", "2"});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const auto start = [](std::uint64_t seq) {
    return "{\"pool\":\"city\",\"seq\":" + std::to_string(seq) +
           ",\"weight\":-3,\"pairs\":1,\"matching\":[[1,2,-3]],\"mode\":\"perfect\","
           "\"no_perfect_matching\":false,\"catch_up\":true}";
  };
  EXPECT_EQ(lines_of(result.out), (std::vector<std::string>{start(5), diff_line("city", 6, 5),
                                                            start(8), diff_line("city", 9, 8)}));
  EXPECT_EQ(result.err,
            "note: pool city: diff 8 follows seq 7, but the last seq held is 6; catching up "
            "again\n");
}

// The same message of another incarnation of the pool (Diff.incarnation).
Message of_incarnation(Message message, std::uint64_t incarnation) {
  yoke::v1::Publication publication;
  EXPECT_TRUE(publication.ParseFromString(message.second));
  publication.mutable_diff()->set_incarnation(incarnation);
  message.second = publication.SerializeAsString();
  return message;
}

// docs/protocol.md, "Catching up": the matching held is of incarnation 10 at seq 3. A diff of an
// earlier pool of the name (5) is dropped; diff 4 follows seq 3 but is of a later pool (20), met
// in its middle (the retirement was missed): the matching is fetched again (incarnation 20 at
// seq 5), and 6 follows it.
TEST(WatchCommand, CatchUpTellsPoolsOfOneNameApartByIncarnation) {
  TempDir dir;
  const std::string publish = "ipc://" + dir.file("publish");
  const std::string query = "ipc://" + dir.file("query");
  FakePublisher publisher(publish, {of_incarnation(diff_message("city", 2, 1), 5),
                                    of_incarnation(diff_message("city", 4, 3), 20),
                                    of_incarnation(diff_message("city", 6, 5), 20)});
  const std::vector<std::pair<std::uint64_t, std::uint64_t>> matchings = {{3, 10}, {5, 20}};
  std::size_t asked = 0;
  FakeRouter query_peer(query, [&](const std::string& bytes) -> std::optional<std::string> {
    yoke::v1::QueryRequest request;
    EXPECT_TRUE(request.ParseFromString(bytes));
    yoke::v1::QueryReply reply;
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    reply.set_request_id(request.request_id());
    reply.set_pool("city");
    const auto [seq, incarnation] = matchings.at(std::min(asked++, matchings.size() - 1));
    reply.mutable_matching()->set_seq(seq);
    reply.mutable_matching()->set_incarnation(incarnation);
    return reply.SerializeAsString();
  });
  const RunResult result = run_yoke(dir, {"watch", "--pool", "city", "--publish", publish,
                                          "--query", query, "--catch-up", "--count", "1"});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const auto start = [](std::uint64_t seq) {
    return "{\"pool\":\"city\",\"seq\":" + std::to_string(seq) +
           ",\"weight\":0,\"pairs\":0,\"matching\":[],\"mode\":null,"
           "\"no_perfect_matching\":false,\"catch_up\":true}";
  };
  EXPECT_EQ(lines_of(result.out),
            (std::vector<std::string>{start(3), start(5), diff_line("city", 6, 5)}));
  EXPECT_EQ(result.err,
            "note: pool city: diff 4 is of a later pool of that name than the one held; "
            "catching up again\n");
}

TEST(WatchCommand, CatchUpOnAPoolNotCreatedYetStartsAtSeqZero) {
  TempDir dir;
  const std::string publish = "ipc://" + dir.file("publish");
  const std::string query = "ipc://" + dir.file("query");
  FakePublisher publisher(publish, {diff_message("default", 1, 0)});
  FakeRouter query_peer(query, [](const std::string& bytes) -> std::optional<std::string> {
    yoke::v1::QueryRequest request;
    EXPECT_TRUE(request.ParseFromString(bytes));
    yoke::v1::QueryReply reply;
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    reply.set_request_id(request.request_id());
    reply.mutable_error()->set_code(yoke::v1::Error::UNKNOWN_POOL);
    return reply.SerializeAsString();
  });
  const RunResult result = run_yoke(
      dir, {"watch", "--publish", publish, "--query", query, "--catch-up", "--count", "1"});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(lines_of(result.out),
            (std::vector<std::string>{"{\"pool\":\"default\",\"seq\":0,\"weight\":0,\"pairs\":0,"
                                      "\"matching\":[],\"mode\":null,"
                                      "\"no_perfect_matching\":false,\"catch_up\":true}",
                                      diff_line("default", 1, 0)}));
}

TEST(WatchCommand, SilenceBeyondTheTimeoutIsExit4) {
  TempDir dir;
  const std::string endpoint = "ipc://" + dir.file("publish");
  FakePublisher publisher(endpoint, {});
  const RunResult result = run_yoke(dir, {"watch", "--publish", endpoint, "--timeout-ms", "200"});
  EXPECT_EQ(result.exit_code, 4);
  EXPECT_EQ(result.err,
            "error: no publication for pool default from " + endpoint + " within 200 ms\n");
}

// Starts `yoke args...` with stdout to `out_path` and returns its pid. Everything the child
// needs is built before fork(): a threaded parent's child may only exec.
pid_t start_yoke(const std::vector<std::string>& args, const std::string& out_path) {
  std::vector<std::string> words = {YOKE_BINARY};
  words.insert(words.end(), args.begin(), args.end());
  std::vector<char*> argv;
  for (std::string& word : words) argv.push_back(word.data());
  argv.push_back(nullptr);
  const int out = open(out_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
  const pid_t pid = fork();
  if (pid == 0) {
    dup2(out, STDOUT_FILENO);
    execv(argv[0], argv.data());
    _exit(127);
  }
  close(out);
  return pid;
}

TEST(WatchCommand, SigintAndSigtermEndTheWatchWithExit0) {
  for (const int signal_number : {SIGINT, SIGTERM}) {
    TempDir dir;
    const std::string endpoint = "ipc://" + dir.file("publish");
    FakePublisher publisher(endpoint, {diff_message("default", 1, 0)});
    const pid_t pid = start_yoke({"watch", "--publish", endpoint}, dir.file("watch.out"));
    ASSERT_GT(pid, 0);
    // Signalled once it has printed the diff: it is then waiting for more, with no --count.
    const auto give_up = std::chrono::steady_clock::now() + std::chrono::seconds(20);
    while (dir.read("watch.out").find('\n') == std::string::npos &&
           std::chrono::steady_clock::now() < give_up) {
      std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
    EXPECT_EQ(dir.read("watch.out"), diff_line("default", 1, 0) + "\n");
    kill(pid, signal_number);
    int status = 0;
    ASSERT_EQ(waitpid(pid, &status, 0), pid);
    EXPECT_TRUE(WIFEXITED(status)) << "signal " << signal_number;
    EXPECT_EQ(WEXITSTATUS(status), 0) << "signal " << signal_number;
  }
}

}  // namespace
}  // namespace yoke::cli::testing
