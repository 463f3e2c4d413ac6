// `yoke query` end to end against a query peer (fake_daemon.h) on ipc:// in a temp dir: the
// request each KIND and option makes, the JSON printed for the reply, and the error paths.
#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "fake_daemon.h"
#include "run_yoke.h"
#include "yoke/v1/query.pb.h"

namespace yoke::cli::testing {
namespace {

using yoke::v1::QueryReply;
using yoke::v1::QueryRequest;

// Fills in `reply` for a request: nothing leaves the request unanswered.
using Responder = std::function<std::optional<QueryReply>(const QueryRequest&)>;

struct QueryRun {
  RunResult result;
  std::vector<QueryRequest> requests;
  std::string endpoint;
};

QueryRun run_query(const std::vector<std::string>& args, Responder respond) {
  TempDir dir;
  QueryRun run;
  run.endpoint = "ipc://" + dir.file("query");
  FakeRouter peer(run.endpoint, [&respond](const std::string& bytes) -> std::optional<std::string> {
    QueryRequest request;
    EXPECT_TRUE(request.ParseFromString(bytes));
    std::optional<QueryReply> reply = respond(request);
    if (!reply) return std::nullopt;
    reply->set_version(yoke::v1::PROTOCOL_VERSION_1);
    reply->set_request_id(request.request_id());
    return reply->SerializeAsString();
  });
  std::vector<std::string> full = {"query"};
  full.insert(full.end(), args.begin(), args.end());
  full.insert(full.end(), {"--query", run.endpoint});
  run.result = run_yoke(dir, full);
  for (const std::string& bytes : peer.requests()) {
    run.requests.emplace_back().ParseFromString(bytes);
  }
  return run;
}

QueryReply summary_reply(const QueryRequest& request) {
  QueryReply reply;
  reply.set_pool(request.pool());
  yoke::v1::Summary& summary = *reply.mutable_summary();
  summary.set_seq(42);
  summary.set_weight(-17);
  summary.set_pairs(3);
  summary.set_vertices(7);
  summary.set_edges(9);
  summary.set_mode(yoke::v1::MODE_MAX_CARDINALITY);
  return reply;
}

TEST(QueryCommand, SummaryPrintsOneObject) {
  const QueryRun run = run_query({"summary", "--pool", "harbour"}, summary_reply);
  ASSERT_EQ(run.result.exit_code, 0) << run.result.err;
  EXPECT_EQ(run.result.out,
            "{\"pool\":\"harbour\",\"seq\":42,\"weight\":-17,\"pairs\":3,\"vertices\":7,"
            "\"edges\":9,\"mode\":\"max-cardinality\",\"no_perfect_matching\":false}\n");
  ASSERT_EQ(run.requests.size(), 1u);
  EXPECT_EQ(run.requests[0].version(), 1u);
  EXPECT_EQ(run.requests[0].pool(), "harbour");
  EXPECT_TRUE(run.requests[0].has_summary());
}

TEST(QueryCommand, MateAndExplainCarryTheVertexAndAlternatives) {
  const QueryRun mate = run_query({"mate", "--vertex", "18446744073709551615"},
                                  [](const QueryRequest& request) {
                                    QueryReply reply;
                                    reply.set_pool("default");
                                    reply.mutable_mate()->set_seq(5);
                                    reply.mutable_mate()->set_vertex(request.mate().vertex());
                                    return reply;
                                  });
  ASSERT_EQ(mate.result.exit_code, 0) << mate.result.err;
  EXPECT_EQ(mate.result.out,
            "{\"pool\":\"default\",\"seq\":5,\"vertex\":18446744073709551615,\"mate\":null,"
            "\"pair_weight\":null}\n");
  EXPECT_EQ(mate.requests.at(0).pool(), "default");

  const QueryRun explain =
      run_query({"explain", "--vertex", "3", "--alternatives", "2"}, [](const QueryRequest&) {
        QueryReply reply;
        reply.mutable_explain()->set_vertex(3);
        return reply;
      });
  ASSERT_EQ(explain.result.exit_code, 0) << explain.result.err;
  ASSERT_EQ(explain.requests.size(), 1u);
  EXPECT_EQ(explain.requests[0].explain().vertex(), 3u);
  EXPECT_EQ(explain.requests[0].explain().max_alternatives(), 2u);
}

TEST(QueryCommand, ExplainTextWordsTheReply) {
  // Doubled dual 95 with offset 8: price (95 - 8) / 2 = 43.5; slack_x2 4: 2 short. The JSON
  // form of the same reply gives the same numbers.
  const auto reply_of = [](const QueryRequest&) {
    QueryReply reply;
    reply.set_pool("default");
    yoke::v1::Explanation& explain = *reply.mutable_explain();
    explain.set_seq(31);
    explain.set_vertex(12);
    explain.set_mate(40);
    explain.set_pair_weight(87);
    explain.set_dual_x2(95);
    explain.set_weight_offset(8);
    yoke::v1::Alternative& rival = *explain.add_alternatives();
    rival.set_other(55);
    rival.set_weight(80);
    rival.set_slack_x2(4);
    rival.set_other_mate(9);
    return reply;
  };
  const QueryRun run = run_query({"explain", "--vertex", "12", "--text"}, reply_of);
  ASSERT_EQ(run.result.exit_code, 0) << run.result.err;
  EXPECT_EQ(run.result.out.substr(0, run.result.out.find("Slack:")),
            "explain 12 at seq 31 (pool default):\n"
            "12 is paired with 40 (weight 87). Its price is 43.5.\n"
            "Closest alternatives, least slack first:\n"
            "  55 (weight 80): 2 short of winning (slack 2); 55 is paired with 9\n");
  const QueryRun json = run_query({"explain", "--vertex", "12"}, reply_of);
  ASSERT_EQ(json.result.exit_code, 0) << json.result.err;
  const nlohmann::json answer = nlohmann::json::parse(json.result.out);
  EXPECT_EQ(answer["price"], 43.5);
  EXPECT_EQ(answer["dual_x2"], 95);
  EXPECT_EQ(answer["alternatives"][0]["slack"], 2);
  EXPECT_EQ(answer["alternatives"][0]["slack_x2"], 4);
  EXPECT_EQ(run_query({"summary", "--text"}, summary_reply).result.exit_code, 2);
}

TEST(QueryCommand, EveryKindAsksForItself) {
  for (const std::string kind : {"matching", "stats", "snapshot", "health"}) {
    const QueryRun run = run_query({kind}, [](const QueryRequest& request) {
      QueryReply reply;
      if (request.has_matching()) reply.mutable_matching();
      if (request.has_stats()) reply.mutable_stats();
      if (request.has_snapshot()) reply.mutable_snapshot();
      if (request.has_health()) reply.mutable_health()->set_ok(true);
      return reply;
    });
    EXPECT_EQ(run.result.exit_code, 0) << kind << ": " << run.result.err;
    EXPECT_EQ(run.result.out.back(), '\n') << kind;
  }
  const QueryRun all = run_query({"snapshot", "--all-pools"}, [](const QueryRequest&) {
    QueryReply reply;
    reply.mutable_snapshot()->set_path("/var/lib/yoke/snap");
    return reply;
  });
  ASSERT_EQ(all.result.exit_code, 0) << all.result.err;
  EXPECT_TRUE(all.requests.at(0).snapshot().all_pools());
  EXPECT_EQ(all.result.out, "{\"pools\":[],\"path\":\"/var/lib/yoke/snap\"}\n");
}

TEST(QueryCommand, AnErrorReplyIsExit2WithItsCode) {
  const QueryRun run = run_query({"summary", "--pool", "nowhere"}, [](const QueryRequest&) {
    QueryReply reply;
    reply.mutable_error()->set_code(yoke::v1::Error::UNKNOWN_POOL);
    reply.mutable_error()->set_message("no pool named 'nowhere'");
    return reply;
  });
  EXPECT_EQ(run.result.exit_code, 2);
  EXPECT_EQ(run.result.out, "");
  EXPECT_EQ(run.result.err, "error: UNKNOWN_POOL: no pool named 'nowhere'\n");
}

TEST(QueryCommand, ARequestTheDaemonCannotReadIsAnsweredWithIdZero) {
  TempDir dir;
  const std::string endpoint = "ipc://" + dir.file("query");
  FakeRouter peer(endpoint, [](const std::string&) -> std::optional<std::string> {
    QueryReply reply;  // request_id 0: the daemon could not read the request
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    reply.mutable_error()->set_code(yoke::v1::Error::MALFORMED_MESSAGE);
    reply.mutable_error()->set_message("not a QueryRequest");
    return reply.SerializeAsString();
  });
  const RunResult result = run_yoke(dir, {"query", "health", "--query", endpoint});
  EXPECT_EQ(result.exit_code, 2);
  EXPECT_EQ(result.err, "error: MALFORMED_MESSAGE: not a QueryRequest\n");
}

TEST(QueryCommand, AReplyOfTheWrongKindIsExit2) {
  const QueryRun run = run_query({"stats"}, summary_reply);
  EXPECT_EQ(run.result.exit_code, 2);
  EXPECT_NE(run.result.err.find("answered a stats query with a reply of another kind"),
            std::string::npos)
      << run.result.err;
}

TEST(QueryCommand, NoReplyIsExit4) {
  const QueryRun run = run_query({"health", "--timeout-ms", "150"},
                                 [](const QueryRequest&) { return std::nullopt; });
  EXPECT_EQ(run.result.exit_code, 4);
  EXPECT_EQ(run.result.err, "error: no reply from " + run.endpoint + " within 150 ms\n");
}

TEST(QueryCommand, OptionsThatDoNotFitTheKindAreExit2) {
  TempDir dir;
  for (const std::vector<std::string>& args : std::vector<std::vector<std::string>>{
           {"query", "mate"},
           {"query", "summary", "--vertex", "3"},
           {"query", "mate", "--vertex", "3", "--alternatives", "2"},
           {"query", "stats", "--all-pools"},
           {"query", "everything"}}) {
    const RunResult result = run_yoke(dir, args);
    EXPECT_EQ(result.exit_code, 2) << args[1];
    EXPECT_EQ(result.err.rfind("error: ", 0), 0u) << result.err;
  }
}

}  // namespace
}  // namespace yoke::cli::testing
