// `yoke solve` end to end: the built binary on small files in a temp directory. Each expected
// optimum names its source: exhaustive enumeration (exhaustive_matching.h) or common knowledge.
#include <gtest/gtest.h>

#include <algorithm>
#include <map>
#include <nlohmann/json.hpp>
#include <random>
#include <set>
#include <sstream>
#include <string>

#include "exhaustive_matching.h"
#include "run_yoke.h"
#include "tools/formats/edge_list_reader.h"

namespace yoke::cli::testing {
namespace {

using nlohmann::json;

// A triangle of Vardolune pickup points with a courier hanging off one corner; sparse ids,
// one at the top of the 64-bit range.
const char* const kHarbourTriangle =
    "# harbour triangle with a tail\n"
    "900 18446744073709551615 6\n"
    "18446744073709551615 42 5\n"
    "42 900 4\n"
    "42 7 3\n";

// The exhaustive optimum of an edge-list text, read through the loader under test.
std::optional<Optimum> exhaustive(const std::string& text, Mode mode) {
  const formats::EdgeList list = formats::parse_edge_list(text);
  return exhaustive_optimum(list.external_ids.size(), list.edges, mode);
}

// Checks that `output` describes a matching of the graph in `text`, in external ids, with
// the weight and pair count it reports, listed in the documented order.
void expect_consistent_matching(const json& output, const std::string& text) {
  std::map<std::pair<std::uint64_t, std::uint64_t>, std::int64_t> weight_of;
  std::istringstream lines(text);
  std::string line;
  while (std::getline(lines, line)) {
    std::istringstream fields(line);
    std::uint64_t u = 0;
    std::uint64_t v = 0;
    std::int64_t w = 0;
    if (fields >> u >> v >> w) weight_of[{std::min(u, v), std::max(u, v)}] = w;
  }

  const json& matching = output.at("matching");
  std::set<std::uint64_t> used;
  std::int64_t weight = 0;
  std::uint64_t previous_smaller = 0;
  for (std::size_t i = 0; i < matching.size(); ++i) {
    const auto a = matching[i].at(0).get<std::uint64_t>();
    const auto b = matching[i].at(1).get<std::uint64_t>();
    EXPECT_LT(a, b) << "pairs list the smaller id first";
    if (i > 0) {
      EXPECT_LT(previous_smaller, a) << "pairs are sorted by the smaller id";
    }
    previous_smaller = a;
    const auto edge = weight_of.find({a, b});
    ASSERT_NE(edge, weight_of.end()) << a << " " << b << " is not an edge of the input";
    weight += edge->second;
    EXPECT_TRUE(used.insert(a).second) << a << " is matched twice";
    EXPECT_TRUE(used.insert(b).second) << b << " is matched twice";
  }
  EXPECT_EQ(output.at("pairs").get<std::size_t>(), matching.size());
  EXPECT_EQ(output.at("weight").get<std::int64_t>(), weight);
}

// Runs `yoke solve FILE --mode MODE` with a certificate and has `yoke verify` check it, as
// every solver result in a test must be (DEVELOPERS.md, Conventions). Returns solve's run.
RunResult solve_and_verify(const TempDir& dir, const std::string& file, Mode mode) {
  const std::string certificate = dir.file("certificate.json");
  const RunResult run =
      run_yoke(dir, {"solve", file, "--mode", mode_name(mode), "--certificate", certificate});
  if (run.exit_code == 0) {
    const RunResult check = run_yoke(dir, {"verify", file, certificate});
    EXPECT_EQ(check.exit_code, 0) << check.out << check.err;
  }
  return run;
}

TEST(SolveCommand, PrintsTheDocumentedFields) {
  TempDir dir;
  const RunResult run = run_yoke(dir, {"solve", dir.write("g.txt", kHarbourTriangle)});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  EXPECT_EQ(run.err, "");
  EXPECT_EQ(run.out.back(), '\n');
  EXPECT_EQ(run.out.find('\n'), run.out.size() - 1) << "one JSON object on one line";
  const json output = json::parse(run.out);
  EXPECT_EQ(output.at("status"), "optimal");
  EXPECT_EQ(output.at("mode"), "max-weight");
  EXPECT_EQ(output.at("vertices"), 4);
  EXPECT_EQ(output.at("edges"), 4);
  EXPECT_TRUE(output.at("weight").is_number_integer());
  EXPECT_TRUE(output.at("pairs").is_number_integer());
  EXPECT_TRUE(output.at("solve_ms").is_number_float());
  EXPECT_GE(output.at("solve_ms").get<double>(), 0.0);
  EXPECT_TRUE(output.at("matching").is_array());
}

TEST(SolveCommand, HarbourTriangleOptimumInExternalIds) {
  TempDir dir;
  const RunResult run =
      solve_and_verify(dir, dir.write("g.txt", kHarbourTriangle), Mode::max_weight);
  ASSERT_EQ(run.exit_code, 0) << run.err;
  const json output = json::parse(run.out);
  // Exhaustive enumeration: {900, 2^64-1} + {7, 42} = 6 + 3 = 9 is the unique optimum.
  const auto optimum = exhaustive(kHarbourTriangle, Mode::max_weight);
  ASSERT_TRUE(optimum.has_value());
  EXPECT_EQ(optimum->weight, 9);
  EXPECT_EQ(output.at("weight"), optimum->weight);
  EXPECT_EQ(output.at("pairs"), optimum->pairs);
  EXPECT_EQ(output.at("matching"), json::parse("[[7,42],[900,18446744073709551615]]"));
  expect_consistent_matching(output, kHarbourTriangle);
}

TEST(SolveCommand, ReadsStdin) {
  TempDir dir;
  const RunResult run = run_yoke(dir, {"solve", "-"}, kHarbourTriangle);
  ASSERT_EQ(run.exit_code, 0) << run.err;
  // Exhaustive enumeration (as above): 9.
  EXPECT_EQ(json::parse(run.out).at("weight"),
            exhaustive(kHarbourTriangle, Mode::max_weight)->weight);
}

TEST(SolveCommand, ModesChangeTheOptimumOfAPath) {
  // A path 1-2-3-4 with a heavy middle edge: one pair of weight 10, or two pairs of weight 2.
  const std::string path = "1 2 1\n2 3 10\n3 4 1\n";
  TempDir dir;
  const std::string file = dir.write("path.txt", path);
  for (const Mode mode : {Mode::max_weight, Mode::max_cardinality, Mode::perfect}) {
    SCOPED_TRACE(mode_name(mode));
    const RunResult run = solve_and_verify(dir, file, mode);
    ASSERT_EQ(run.exit_code, 0) << run.err;
    const json output = json::parse(run.out);
    // Exhaustive enumeration: max-weight 10 (1 pair); max-cardinality and perfect 2 (2 pairs).
    const auto optimum = exhaustive(path, mode);
    ASSERT_TRUE(optimum.has_value());
    EXPECT_EQ(output.at("mode"), mode_name(mode));
    EXPECT_EQ(output.at("weight"), optimum->weight);
    EXPECT_EQ(output.at("pairs"), optimum->pairs);
    expect_consistent_matching(output, path);
  }
}

TEST(SolveCommand, NegativeWeightsAreLeftUnmatchedUnlessPerfectModeNeedsThem) {
  // A 4-cycle of losses: max-weight takes nothing; perfect must take the lighter loss.
  const std::string cycle = "10 20 -1\n20 30 -2\n30 40 -3\n40 10 -4\n";
  TempDir dir;
  const std::string file = dir.write("cycle.txt", cycle);

  const json nothing = json::parse(solve_and_verify(dir, file, Mode::max_weight).out);
  EXPECT_EQ(nothing.at("weight"), 0);  // common knowledge: the empty matching beats any loss
  EXPECT_EQ(nothing.at("matching"), json::array());

  const RunResult run = solve_and_verify(dir, file, Mode::perfect);
  ASSERT_EQ(run.exit_code, 0) << run.err;
  const json perfect = json::parse(run.out);
  // Exhaustive enumeration: {10-20, 30-40} = -4 beats {20-30, 40-10} = -6.
  EXPECT_EQ(perfect.at("weight"), exhaustive(cycle, Mode::perfect)->weight);
  EXPECT_EQ(perfect.at("weight"), -4);
  EXPECT_EQ(perfect.at("matching"), json::parse("[[10,20],[30,40]]"));
}

TEST(SolveCommand, PerfectModeWithoutAPerfectMatchingExitsThree) {
  // Common knowledge: a graph with an odd number of vertices has no perfect matching.
  TempDir dir;
  const RunResult run =
      run_yoke(dir, {"solve", dir.write("t.txt", "1 2 5\n2 3 5\n3 1 5\n"), "--mode", "perfect"});
  EXPECT_EQ(run.exit_code, 3) << run.err;
  const json output = json::parse(run.out);
  EXPECT_EQ(output.at("status"), "no_perfect_matching");
  EXPECT_EQ(output.at("mode"), "perfect");
  EXPECT_TRUE(output.contains("matching"));
}

TEST(SolveCommand, AgreesWithExhaustiveEnumerationOnSmallRandomGraphs) {
  std::mt19937_64 random(20240611);
  TempDir dir;
  for (int round = 0; round < 12; ++round) {
    // 2..9 vertices with sparse ids, about half the pairs present, weights in [-20, 40].
    const int n = 2 + static_cast<int>(random() % 8);
    std::vector<std::uint64_t> ids;
    for (int i = 0; i < n; ++i) ids.push_back(random() >> (random() % 64));
    std::sort(ids.begin(), ids.end());
    ids.erase(std::unique(ids.begin(), ids.end()), ids.end());
    std::string text;
    for (std::size_t i = 0; i < ids.size(); ++i) {
      for (std::size_t j = i + 1; j < ids.size(); ++j) {
        if (random() % 2) continue;
        const auto w = static_cast<std::int64_t>(random() % 61) - 20;
        text += std::to_string(ids[i]) + " " + std::to_string(ids[j]) + " " +
                std::to_string(w) + "\n";
      }
    }
    const std::string file = dir.write("r.txt", text);
    for (const Mode mode : {Mode::max_weight, Mode::max_cardinality, Mode::perfect}) {
      SCOPED_TRACE("round " + std::to_string(round) + " mode " + mode_name(mode) + "\n" + text);
      const RunResult run = solve_and_verify(dir, file, mode);
      // Exhaustive enumeration of every matching of the graph.
      const auto optimum = exhaustive(text, mode);
      const json output = json::parse(run.out);
      if (!optimum) {
        EXPECT_EQ(run.exit_code, 3);
        EXPECT_EQ(output.at("status"), "no_perfect_matching");
        continue;
      }
      ASSERT_EQ(run.exit_code, 0) << run.err;
      EXPECT_EQ(output.at("weight"), optimum->weight);
      // Under ties only the weight is unique in max-weight mode (docs/contracts.md §2).
      if (mode != Mode::max_weight) {
        EXPECT_EQ(output.at("pairs"), optimum->pairs);
      }
      expect_consistent_matching(output, text);
    }
  }
}

TEST(SolveCommand, ReportsTheFileAndLineOfABadEdge) {
  TempDir dir;
  const std::string file = dir.write("bad.txt", "1 2 3\n\n4 5 1.5\n");
  const RunResult run = run_yoke(dir, {"solve", file});
  EXPECT_EQ(run.exit_code, 2);
  EXPECT_EQ(run.out, "");
  EXPECT_EQ(run.err, "error: " + file + ":3: weight '1.5' is not an integer\n");
}

TEST(SolveCommand, ReportsDuplicatesAndSelfLoopsOnStdin) {
  TempDir dir;
  const RunResult duplicate = run_yoke(dir, {"solve", "-"}, "1 2 3\n2 1 4\n");
  EXPECT_EQ(duplicate.exit_code, 2);
  EXPECT_EQ(duplicate.err,
            "error: <stdin>:2: duplicate edge between 2 and 1 (first given on line 1)\n");
  const RunResult loop = run_yoke(dir, {"solve", "-"}, "3 3 1\n");
  EXPECT_EQ(loop.exit_code, 2);
  EXPECT_EQ(loop.err, "error: <stdin>:1: self loop on vertex 3\n");
}

TEST(SolveCommand, RejectsWeightsBeyondTheEngineBound) {
  // kMaxAbsWeight = 2^52 is accepted by the loader but refused by the engine.
  TempDir dir;
  const std::string too_heavy = std::to_string((std::int64_t{1} << 52) + 1);
  const RunResult run = run_yoke(dir, {"solve", dir.write("heavy.txt", "1 2 " + too_heavy + "\n")});
  EXPECT_EQ(run.exit_code, 2);
  EXPECT_EQ(run.out, "");
  EXPECT_EQ(run.err.rfind("error: ", 0), 0u) << run.err;
}

TEST(SolveCommand, UsageErrorsExitTwo) {
  TempDir dir;
  const std::string file = dir.write("g.txt", kHarbourTriangle);
  EXPECT_EQ(run_yoke(dir, {"solve", file, "--mode", "fastest"}).exit_code, 2);
  EXPECT_EQ(run_yoke(dir, {"solve"}).exit_code, 2);
  EXPECT_EQ(run_yoke(dir, {}).exit_code, 2);
  EXPECT_EQ(run_yoke(dir, {"unknown-command"}).exit_code, 2);
  const RunResult missing = run_yoke(dir, {"solve", dir.file("absent.txt")});
  EXPECT_EQ(missing.exit_code, 2);
  EXPECT_EQ(missing.err.rfind("error: cannot open ", 0), 0u) << missing.err;
  const RunResult unwritable =
      run_yoke(dir, {"solve", file, "--certificate", dir.file("no/such/dir/c.json")});
  EXPECT_EQ(unwritable.exit_code, 2);
  EXPECT_EQ(unwritable.err.rfind("error: cannot write ", 0), 0u) << unwritable.err;
  const RunResult to_stdout = run_yoke(dir, {"solve", file, "--certificate", "-"});
  EXPECT_EQ(to_stdout.exit_code, 2);
  EXPECT_EQ(to_stdout.out, "");
  EXPECT_NE(to_stdout.err.find("--certificate needs a file path"), std::string::npos) << to_stdout.err;
}

TEST(SolveCommand, HelpAndVersionExitZero) {
  TempDir dir;
  const RunResult help = run_yoke(dir, {"--help"});
  EXPECT_EQ(help.exit_code, 0);
  EXPECT_NE(help.out.find("solve"), std::string::npos);
  EXPECT_EQ(run_yoke(dir, {"--version"}).exit_code, 0);
}

TEST(SolveCommand, EmptyGraphHasAnEmptyMatching) {
  // Common knowledge: a graph with no edges has only the empty matching.
  TempDir dir;
  const RunResult run = run_yoke(dir, {"solve", dir.write("empty.txt", "# nothing yet\n")});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  const json output = json::parse(run.out);
  EXPECT_EQ(output.at("weight"), 0);
  EXPECT_EQ(output.at("pairs"), 0);
  EXPECT_EQ(output.at("vertices"), 0);
}

}  // namespace
}  // namespace yoke::cli::testing
