// `yoke gen` end to end: every family writes an edge list that the loader accepts, the same
// seed gives the same bytes, and impossible requests are errors.
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "run_yoke.h"
#include "tools/formats/edge_list_reader.h"

namespace yoke::cli::testing {
namespace {


TEST(GenCommand, EveryFamilyWritesALoadableEdgeList) {
  const std::vector<std::vector<std::string>> families = {
      {"city", "--vertices", "60", "--neighbours", "4"},
      {"random", "--vertices", "30", "--edges", "50", "--min-weight", "-5", "--max-weight", "9"},
      {"dispatch", "--couriers", "20", "--orders", "25", "--per-order", "3"},
      {"complete", "--vertices", "6"},
      {"stress", "--vertices", "40"},
  };
  TempDir dir;
  for (std::vector<std::string> args : families) {
    SCOPED_TRACE(args[0]);
    args.insert(args.begin(), "gen");
    args.insert(args.end(), {"--seed", "5", "-o", dir.file("g.txt")});
    const RunResult run = run_yoke(dir, args);
    ASSERT_EQ(run.exit_code, 0) << run.err;
    const std::string text = dir.read("g.txt");
    EXPECT_EQ(text.rfind("# yoke gen " + args[1], 0), 0u) << "starts with its recipe";
    EXPECT_NO_THROW(formats::parse_edge_list(text));
    const RunResult solved = run_yoke(dir, {"solve", dir.file("g.txt")});
    EXPECT_EQ(solved.exit_code, 0) << solved.err;
  }
}

TEST(GenCommand, RandomHasTheRequestedSizeAndWeights) {
  TempDir dir;
  const RunResult run = run_yoke(dir, {"gen", "random", "--vertices", "40", "--edges", "100",
                                       "--min-weight", "-3", "--max-weight", "3", "--seed", "9"});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  const formats::EdgeList list = formats::parse_edge_list(run.out);
  EXPECT_EQ(list.edges.size(), 100u);
  EXPECT_LE(list.external_ids.size(), 40u);
  for (const std::uint64_t id : list.external_ids) EXPECT_LT(id, 40u);
  for (const Edge& e : list.edges) {
    EXPECT_GE(e.w, -3);
    EXPECT_LE(e.w, 3);
  }
}

TEST(GenCommand, CompleteGraphHasEveryPair) {
  // Common knowledge: K_n has n (n - 1) / 2 edges; K_7 has 21.
  TempDir dir;
  const RunResult run = run_yoke(dir, {"gen", "complete", "--vertices", "7"});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  EXPECT_EQ(formats::parse_edge_list(run.out).edges.size(), 21u);
}

TEST(GenCommand, SameSeedSameGraph) {
  TempDir dir;
  const std::vector<std::string> args = {"gen", "city", "--vertices", "80", "--seed", "17"};
  const RunResult first = run_yoke(dir, args);
  const RunResult second = run_yoke(dir, args);
  ASSERT_EQ(first.exit_code, 0) << first.err;
  EXPECT_EQ(first.out, second.out);
}

// The tail mix, aimed at the pool `yoke gen` feeds, one action per batch, with coarse weights:
// the recipe says so, every batch replays and its certificate holds, and the same seed gives the
// same bytes.
TEST(GenCommand, AimedTailStreamReplaysCertified) {
  TempDir dir;
  const std::vector<std::string> args = {
      "gen", "stream", "city", "--vertices", "300", "--degree", "8", "--events", "60",
      "--action-batches", "--mix", "tail", "--weight-grain", "50", "--seed", "3",
      "-o", dir.file("s.txt")};
  const RunResult run = run_yoke(dir, args);
  ASSERT_EQ(run.exit_code, 0) << run.err;
  const std::string text = dir.read("s.txt");
  EXPECT_EQ(text.rfind("# yoke gen stream city --vertices 300 --events 60 --mix tail --degree 8 "
                       "--action-batches --weight-grain 50 --seed 3\n",
                       0),
            0u)
      << text.substr(0, 200);
  EXPECT_NE(text.find("# aimed at a max-weight pool"), std::string::npos);
  const RunResult replayed = run_yoke(dir, {"replay", "--verify", dir.file("s.txt")});
  ASSERT_EQ(replayed.exit_code, 0) << replayed.err;
  std::size_t commits = 0;
  for (std::size_t at = 0; (at = replayed.out.find("commit ", at)) != std::string::npos; ++at) ++commits;
  EXPECT_EQ(commits, 61u) << "the base graph, then one batch per action";
  const std::string first = text;
  ASSERT_EQ(run_yoke(dir, args).exit_code, 0);
  EXPECT_EQ(dir.read("s.txt"), first);
  EXPECT_EQ(run_yoke(dir, {"gen", "stream", "city", "--weight-grain", "0"}).exit_code, 2);
  EXPECT_EQ(run_yoke(dir, {"gen", "stream", "city", "--mix", "rise-cycle=0"}).exit_code, 2);
}

TEST(GenCommand, ImpossibleRequestsAreErrors) {
  TempDir dir;
  // Common knowledge: 5 vertices hold at most 10 distinct pairs.
  const RunResult too_many = run_yoke(dir, {"gen", "random", "--vertices", "5", "--edges", "11"});
  EXPECT_EQ(too_many.exit_code, 2);
  EXPECT_EQ(too_many.err, "error: gen: 5 vertices hold at most 10 edges, asked for 11\n");
  EXPECT_EQ(run_yoke(dir, {"gen", "random", "--min-weight", "5", "--max-weight", "4"}).exit_code,
            2);
  EXPECT_EQ(run_yoke(dir, {"gen", "city", "--vertices", "-3"}).exit_code, 2);
  EXPECT_EQ(run_yoke(dir, {"gen", "city", "--couriers", "3"}).exit_code, 2);
  EXPECT_EQ(run_yoke(dir, {"gen", "lighthouse"}).exit_code, 2);
  EXPECT_EQ(run_yoke(dir, {"gen"}).exit_code, 2);
}

}  // namespace
}  // namespace yoke::cli::testing
