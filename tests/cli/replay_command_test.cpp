// `yoke replay` end to end: the built binary on small hand scripts (expected values derived in
// the comments), rejected batches, the optional outputs, and random scripts that are replayed
// twice (determinism) and checked commit by commit against exhaustive enumeration. Every run
// that commits uses --verify, so each result also passes the certificate checker.
#include <gtest/gtest.h>

#include <iterator>
#include <map>
#include <optional>
#include <random>
#include <cctype>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "yoke/events.h"
#include "exhaustive_matching.h"
#include "run_yoke.h"

namespace yoke::cli::testing {
namespace {

// `yoke replay SCRIPT --verify` plus `extra` arguments on the script text.
RunResult replay(const TempDir& dir, const std::string& script,
                 const std::vector<std::string>& extra = {}) {
  std::vector<std::string> args = {"replay", dir.write("shift.events", script), "--verify"};
  args.insert(args.end(), extra.begin(), extra.end());
  return run_yoke(dir, args);
}

// The output with every timing replaced by T: the part that must not vary between runs.
// (Plain string work: GCC 12's <regex> trips -Wmaybe-uninitialized in the sanitizer build.)
std::string masked(const std::string& output) {
  std::istringstream in(output);
  std::string out;
  for (std::string line; std::getline(in, line);) {
    for (const char* timing : {"stats repair_us", "stats events_per_second"}) {
      if (line.rfind(timing, 0) == 0) line = std::string(timing) + " T";
    }
    const std::size_t at = line.find(" repair_us ");
    if (at != std::string::npos && line.rfind("commit ", 0) == 0) {
      line = line.substr(0, at) + " repair_us T";
    }
    out += line + "\n";
  }
  return out;
}

// The line with every run of digits replaced by N: "mean 1.25" has the shape "mean N.N".
std::string shape(const std::string& line) {
  std::string out;
  for (std::size_t i = 0; i < line.size(); ++i) {
    if (std::isdigit(static_cast<unsigned char>(line[i])) == 0) {
      out += line[i];
    } else if (i == 0 || std::isdigit(static_cast<unsigned char>(line[i - 1])) == 0) {
      out += 'N';
    }
  }
  return out;
}

// The numbers of a line, in order.
std::vector<unsigned long long> numbers(const std::string& line) {
  std::vector<unsigned long long> out;
  std::istringstream in(line);
  for (std::string token; in >> token;) {
    if (!token.empty() && std::isdigit(static_cast<unsigned char>(token[0])) != 0) {
      out.push_back(std::stoull(token));
    }
  }
  return out;
}

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  for (std::string line; std::getline(in, line);) lines.push_back(line);
  return lines;
}

TEST(ReplayCommand, TriangleThenAWeightChangeSwapsThePair) {
  TempDir dir;
  const RunResult run = replay(dir,
                               "# Three couriers at the fish market: any two can share a run.\n"
                               "set 1 2 5\n"
                               "set 2 3 6\n"
                               "set 1 3 4\n"
                               "commit\n"
                               "set 1 3 10\n"
                               "commit\n",
                               {"--diffs"});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  EXPECT_EQ(run.err, "");
  // Common knowledge: a triangle holds one pair, so the optimum is its heaviest edge: {2,3} = 6,
  // then {1,3} = 10 once it is raised; the diff swaps one pair for the other.
  EXPECT_EQ(masked(run.out),
            "commit 1 weight 6 pairs 1 repair_us T\n"
            "+ 2 3\n"
            "commit 2 weight 10 pairs 1 repair_us T\n"
            "- 2 3\n"
            "+ 1 3\n");
}

TEST(ReplayCommand, PathWhoseMiddleEdgeRisesAndGoes) {
  TempDir dir;
  const RunResult run = replay(dir,
                               "set 1 2 3\n"
                               "set 2 3 5\n"
                               "set 3 4 3\n"
                               "commit\n"
                               "set 2 3 7\n"
                               "commit\n"
                               "unset 2 3\n"
                               "commit\n",
                               {"--diffs"});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  // Enumerated by hand: the matchings of the path 1-2-3-4 are one edge or {1-2, 3-4}.
  // {1-2, 3-4} = 6 beats {2-3} = 5; at 7 the middle edge wins; without it 6 again.
  EXPECT_EQ(masked(run.out),
            "commit 1 weight 6 pairs 2 repair_us T\n"
            "+ 1 2\n"
            "+ 3 4\n"
            "commit 2 weight 7 pairs 1 repair_us T\n"
            "- 1 2\n"
            "- 3 4\n"
            "+ 2 3\n"
            "commit 3 weight 6 pairs 2 repair_us T\n"
            "- 2 3\n"
            "+ 1 2\n"
            "+ 3 4\n");
}

TEST(ReplayCommand, RemovalAndReturnOfAVertex) {
  TempDir dir;
  const RunResult run = replay(dir,
                               "set 10 20 8\n"
                               "set 20 30 9\n"
                               "set 30 40 2\n"
                               "commit\n"
                               "remove 20\n"
                               "commit\n"
                               "add 20\n"
                               "commit\n"
                               "set 20 10 1\n"
                               "commit\n",
                               {"--diffs"});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  // Enumerated by hand. Path 10-20-30-40: {10-20, 30-40} = 10 beats {20-30} = 9. Without 20
  // only 30-40 = 2 is left; 20 returns with no edges (still 2); then 10-20 = 1 joins: 3.
  EXPECT_EQ(masked(run.out),
            "commit 1 weight 10 pairs 2 repair_us T\n"
            "+ 10 20\n"
            "+ 30 40\n"
            "commit 2 weight 2 pairs 1 repair_us T\n"
            "- 10 20\n"
            "commit 3 weight 2 pairs 1 repair_us T\n"
            "commit 4 weight 3 pairs 2 repair_us T\n"
            "+ 10 20\n");
}

TEST(ReplayCommand, EachModeOnAPathAndANegativeEdge) {
  TempDir dir;
  const std::string script = "set 1 2 3\nset 2 3 10\nset 3 4 3\nset 5 6 -5\ncommit\n";
  // Enumerated by hand. max-weight: {2-3} = 10, and the negative edge is never worth taking.
  // max-cardinality and perfect: the path holds 2 pairs only as {1-2, 3-4}, plus 5-6: 3 pairs,
  // weight 3 + 3 - 5 = 1, and that matching is perfect.
  const std::map<std::string, std::string> expected = {
      {"max-weight", "commit 1 weight 10 pairs 1 repair_us T\n"},
      {"max-cardinality", "commit 1 weight 1 pairs 3 repair_us T\n"},
      {"perfect", "commit 1 weight 1 pairs 3 repair_us T\n"},
  };
  for (const auto& [mode, output] : expected) {
    SCOPED_TRACE(mode);
    const RunResult run = replay(dir, script, {"--mode", mode});
    ASSERT_EQ(run.exit_code, 0) << run.err;
    EXPECT_EQ(masked(run.out), output);
  }
}

TEST(ReplayCommand, PerfectModeNotesCommitsWithoutAPerfectMatching) {
  TempDir dir;
  const RunResult run = replay(dir,
                               "set 1 2 4\n"
                               "set 2 3 5\n"
                               "commit\n"
                               "add 4\n"
                               "commit\n"
                               "set 3 4 1\n"
                               "commit\n",
                               {"--mode", "perfect"});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  // Enumerated by hand. Three vertices cannot all be matched; the reported matching is the
  // max-cardinality optimum {2-3} = 5. Vertex 4 arrives isolated: still none, 4 vertices.
  // With 3-4 the only perfect matching is {1-2, 3-4} = 5.
  EXPECT_EQ(masked(run.out),
            "commit 1 weight 5 pairs 1 repair_us T\n"
            "note: commit 1: no perfect matching (1 pairs for 3 vertices)\n"
            "commit 2 weight 5 pairs 1 repair_us T\n"
            "note: commit 2: no perfect matching (1 pairs for 4 vertices)\n"
            "commit 3 weight 5 pairs 2 repair_us T\n");
}

TEST(ReplayCommand, FullIdRangeAndDiffOrder) {
  TempDir dir;
  const RunResult run = replay(dir,
                               "set 18446744073709551615 0 3\n"
                               "add 18446744073709551614\n"
                               "set 18446744073709551614 7 2\n"
                               "commit\n",
                               {"--diffs"});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  // Two disjoint edges: both taken, 3 + 2 = 5; pairs smaller id first, sorted.
  EXPECT_EQ(masked(run.out),
            "commit 1 weight 5 pairs 2 repair_us T\n"
            "+ 0 18446744073709551615\n"
            "+ 7 18446744073709551614\n");
}

TEST(ReplayCommand, EmptyBatchesAndTheImplicitFinalCommit) {
  TempDir dir;
  const RunResult run = replay(dir, "commit\ncommit\nset 1 2 3\n# no commit after this\n");
  ASSERT_EQ(run.exit_code, 0) << run.err;
  // Nothing in the pool for two commits, then the single edge 1-2 = 3, committed at the end.
  EXPECT_EQ(masked(run.out),
            "commit 1 weight 0 pairs 0 repair_us T\n"
            "commit 2 weight 0 pairs 0 repair_us T\n"
            "commit 3 weight 3 pairs 1 repair_us T\n");

  const RunResult empty = replay(dir, "# nothing happened tonight\n");
  EXPECT_EQ(empty.exit_code, 0) << empty.err;
  EXPECT_EQ(empty.out, "");
}

TEST(ReplayCommand, ReadsTheScriptFromStdin) {
  TempDir dir;
  const RunResult run = run_yoke(dir, {"replay", "-", "--verify"}, "set 4 5 9\ncommit\n");
  ASSERT_EQ(run.exit_code, 0) << run.err;
  EXPECT_EQ(masked(run.out), "commit 1 weight 9 pairs 1 repair_us T\n");

  const RunResult bad = run_yoke(dir, {"replay", "-"}, "add 1\nadd 1 2\n");
  EXPECT_EQ(bad.exit_code, 2);
  EXPECT_EQ(bad.err.rfind("error: <stdin>:2: ", 0), 0u) << bad.err;
}

TEST(ReplayCommand, RejectedBatchStopsWithItsLineAndNothingOfItApplied) {
  TempDir dir;
  const RunResult run = replay(dir,
                               "set 1 2 5\n"
                               "commit\n"
                               "set 2 3 4\n"
                               "unset 1 3\n"
                               "commit\n"
                               "set 3 4 1\n");
  EXPECT_EQ(run.exit_code, 2);
  EXPECT_EQ(masked(run.out), "commit 1 weight 5 pairs 1 repair_us T\n")
      << "the commits before the rejected batch are reported, nothing after";
  EXPECT_EQ(run.err.rfind("error: " + dir.file("shift.events") + ":4: ", 0), 0u) << run.err;
  EXPECT_EQ(lines_of(run.err).size(), 1u) << run.err;
}

TEST(ReplayCommand, UnknownVertexInUnsetOrRemoveIsRejected) {
  TempDir dir;
  const RunResult remove = replay(dir, "add 1\ncommit\nremove 77\ncommit\n");
  EXPECT_EQ(remove.exit_code, 2);
  EXPECT_EQ(remove.err.rfind("error: " + dir.file("shift.events") + ":3: ", 0), 0u)
      << remove.err;
  EXPECT_NE(remove.err.find("77"), std::string::npos) << remove.err;

  // In the implicit final batch, after a blank line.
  const RunResult unset = replay(dir, "set 1 2 3\ncommit\n\nunset 1 99\n");
  EXPECT_EQ(unset.exit_code, 2);
  EXPECT_EQ(unset.err.rfind("error: " + dir.file("shift.events") + ":4: ", 0), 0u)
      << unset.err;
  EXPECT_NE(unset.err.find("99"), std::string::npos) << unset.err;
  EXPECT_EQ(masked(unset.out), "commit 1 weight 3 pairs 1 repair_us T\n");
}

TEST(ReplayCommand, LaterEventOfABatchIsRejectedWithItsOwnLine) {
  TempDir dir;
  // `set` makes 6 arrive, so the `add 6` after it in the same batch is a second arrival.
  const RunResult run = replay(dir, "add 5\nset 5 6 2\n# comment\nadd 6\ncommit\n");
  EXPECT_EQ(run.exit_code, 2);
  EXPECT_EQ(run.out, "");
  EXPECT_EQ(run.err.rfind("error: " + dir.file("shift.events") + ":4: ", 0), 0u) << run.err;
}

TEST(ReplayCommand, MalformedScriptIsRejectedBeforeAnyCommit) {
  TempDir dir;
  const RunResult run = replay(dir, "set 1 2 5\ncommit\nsett 2 3 4\n");
  EXPECT_EQ(run.exit_code, 2);
  EXPECT_EQ(run.out, "");
  EXPECT_EQ(run.err, "error: " + dir.file("shift.events") +
                         ":3: unknown verb 'sett' (expected add, set, unset, remove, hold, release or commit)\n");

  const RunResult loop = replay(dir, "set 5 5 1\n");
  EXPECT_EQ(loop.exit_code, 2);
  EXPECT_EQ(loop.err, "error: " + dir.file("shift.events") + ":1: self loop on vertex 5\n");
}

TEST(ReplayCommand, UsageErrorsExitTwo) {
  TempDir dir;
  EXPECT_EQ(run_yoke(dir, {"replay"}).exit_code, 2);
  EXPECT_EQ(run_yoke(dir, {"replay", dir.write("s", "commit\n"), "--mode", "fastest"}).exit_code,
            2);
  const RunResult missing = run_yoke(dir, {"replay", dir.file("missing.events")});
  EXPECT_EQ(missing.exit_code, 2);
  EXPECT_EQ(missing.err.rfind("error: cannot open ", 0), 0u) << missing.err;
}

TEST(ReplayCommand, HelpDocumentsTheScriptAndTheOutput) {
  TempDir dir;
  const RunResult help = run_yoke(dir, {"replay", "--help"});
  EXPECT_EQ(help.exit_code, 0);
  for (const std::string text :
       {"add U", "set U V W", "unset U V", "remove U", "commit", "end of the file",
        "commit I weight W pairs K repair_us T", "note: commit I", "--diffs", "--verify",
        "stats events_per_second"}) {
    EXPECT_NE(help.out.find(text), std::string::npos) << text;
  }
  EXPECT_NE(run_yoke(dir, {"--help"}).out.find("replay"), std::string::npos);
}

TEST(ReplayCommand, StatsLinesFollowTheLastCommit) {
  TempDir dir;
  const RunResult run =
      replay(dir, "set 1 2 5\nset 2 3 6\ncommit\nset 1 3 10\ncommit\nremove 2\nadd 9\n",
             {"--stats", "--diffs"});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  const std::vector<std::string> lines = lines_of(run.out);
  ASSERT_GE(lines.size(), 5u) << run.out;
  const std::vector<std::string> stats(lines.end() - 5, lines.end());
  EXPECT_EQ(stats[0], "stats commits 3 events 5");
  const std::vector<std::string> formats = {
      "stats repair_us pN N pN N pN N max N",
      "stats searches_per_commit mean N.N max N",
      "stats touched_per_commit mean N.N pN N max N",
      "stats events_per_second N",
  };
  for (std::size_t i = 0; i < formats.size(); ++i) EXPECT_EQ(shape(stats[i + 1]), formats[i]);
  for (const std::string& mean : {stats[2], stats[3]}) {
    const std::size_t dot = mean.find('.');
    ASSERT_NE(dot, std::string::npos) << mean;
    EXPECT_TRUE(dot + 3 <= mean.size() && mean[dot + 3] == ' ') << "two decimals: " << mean;
  }
  const std::vector<unsigned long long> repair = numbers(stats[1]);  // p50 p90 p99 max
  ASSERT_EQ(repair.size(), 4u) << stats[1];
  EXPECT_LE(repair[0], repair[1]);
  EXPECT_LE(repair[1], repair[2]);
  EXPECT_LE(repair[2], repair[3]);
  for (std::size_t i = 0; i + 5 < lines.size(); ++i) {
    EXPECT_NE(lines[i].rfind("stats", 0), 0u) << "stats only after the last commit";
  }
}

// ---- Random scripts ------------------------------------------------------------------------

using KeyPair = std::pair<VertexKey, VertexKey>;

struct PoolState {
  std::set<VertexKey> vertices;
  std::map<KeyPair, Weight> edges;  // (smaller id, larger id)
};

struct GeneratedScript {
  std::string text;
  std::vector<PoolState> after_commit;  // the state each commit (also the implicit one) sees
  std::size_t events = 0;
};

// A random script valid by construction: the test tracks the pool's state and only removes
// what exists. Every verb appears; some lines carry comments; the end may lack a `commit`.
GeneratedScript random_script(std::uint64_t seed, std::size_t event_count, VertexKey id_count) {
  std::mt19937_64 random(seed);
  auto below = [&](std::uint64_t n) { return random() % n; };
  GeneratedScript script;
  PoolState state;
  std::ostringstream text;
  text << "# Vardolune dispatch, seed " << seed << "\n";
  bool pending = false;
  while (script.events < event_count) {
    const std::uint64_t roll = below(100);
    if (roll < 10) {
      const VertexKey u = below(id_count);
      if (state.vertices.count(u) != 0) continue;
      text << "add " << u << "\n";
      state.vertices.insert(u);
    } else if (roll < 60) {
      const VertexKey u = below(id_count);
      const VertexKey v = below(id_count);
      if (u == v) continue;
      const auto w = static_cast<Weight>(below(81)) - 20;  // ties and negatives on purpose
      text << "set " << u << " " << v << " " << w << (roll < 15 ? "  # re-priced run\n" : "\n");
      state.vertices.insert(u);
      state.vertices.insert(v);
      state.edges[{std::min(u, v), std::max(u, v)}] = w;
    } else if (roll < 75) {
      if (state.edges.empty()) continue;
      const auto edge = std::next(state.edges.begin(), static_cast<long>(below(state.edges.size())));
      // Either orientation names the same edge.
      if (below(2) == 0) {
        text << "unset " << edge->first.first << " " << edge->first.second << "\n";
      } else {
        text << "unset " << edge->first.second << " " << edge->first.first << "\n";
      }
      state.edges.erase(edge);
    } else if (roll < 85) {
      if (state.vertices.empty()) continue;
      const VertexKey u =
          *std::next(state.vertices.begin(), static_cast<long>(below(state.vertices.size())));
      text << "remove " << u << "\n";
      state.vertices.erase(u);
      std::erase_if(state.edges,
                    [u](const auto& edge) { return edge.first.first == u || edge.first.second == u; });
    } else {
      text << (roll < 87 ? "\ncommit # end of wave\n" : "commit\n");
      script.after_commit.push_back(state);
      pending = false;
      continue;
    }
    ++script.events;
    pending = true;
  }
  if (pending) script.after_commit.push_back(state);  // the implicit commit at end of file
  script.text = text.str();
  return script;
}

// Exhaustive enumeration of `state` in `mode`.
std::optional<Optimum> exhaustive(const PoolState& state, Mode mode) {
  std::map<VertexKey, Vertex> dense;
  for (const VertexKey key : state.vertices) dense.emplace(key, static_cast<Vertex>(dense.size()));
  std::vector<Edge> edges;
  for (const auto& [pair, w] : state.edges) edges.push_back({dense[pair.first], dense[pair.second], w});
  return exhaustive_optimum(dense.size(), edges, mode);
}

struct CommitLine {
  Weight weight = 0;
  std::size_t pairs = 0;
  bool no_perfect_matching = false;
};

std::vector<CommitLine> commit_lines(const std::string& output) {
  std::vector<CommitLine> commits;
  for (const std::string& line : lines_of(output)) {
    // "commit I weight W pairs K repair_us T"
    std::istringstream in(line);
    std::string commit, weight, pairs, repair_us;
    unsigned long long index = 0, pair_count = 0, micros = 0;
    long long total = 0;
    if (in >> commit >> index >> weight >> total >> pairs >> pair_count >> repair_us >> micros &&
        commit == "commit" && weight == "weight" && pairs == "pairs" && repair_us == "repair_us") {
      EXPECT_EQ(index, commits.size() + 1) << line;
      EXPECT_EQ(shape(line), total < 0 ? "commit N weight -N pairs N repair_us N"
                                       : "commit N weight N pairs N repair_us N");
      commits.push_back({total, pair_count, false});
    } else if (line.rfind("note: commit ", 0) == 0 && !commits.empty()) {
      commits.back().no_perfect_matching = true;
    }
  }
  return commits;
}

TEST(ReplayCommand, SameScriptSameOutputApartFromTimings) {
  TempDir dir;
  const GeneratedScript script = random_script(20240611, 400, 40);
  ASSERT_GT(script.after_commit.size(), 20u);
  for (const std::string verb : {"\nadd ", "\nset ", "\nunset ", "\nremove ", "\ncommit"}) {
    EXPECT_NE(script.text.find(verb), std::string::npos) << "the script uses every verb";
  }
  for (const std::string mode : {"max-weight", "perfect"}) {
    SCOPED_TRACE(mode);
    const RunResult first = replay(dir, script.text, {"--mode", mode, "--diffs", "--stats"});
    const RunResult second = replay(dir, script.text, {"--mode", mode, "--diffs", "--stats"});
    ASSERT_EQ(first.exit_code, 0) << first.err;
    ASSERT_EQ(second.exit_code, 0) << second.err;
    EXPECT_EQ(masked(first.out), masked(second.out));
    EXPECT_EQ(commit_lines(first.out).size(), script.after_commit.size());
    EXPECT_NE(first.out.find("stats commits " + std::to_string(script.after_commit.size()) +
                             " events " + std::to_string(script.events) + "\n"),
              std::string::npos);
  }
}

TEST(ReplayCommand, RandomScriptsMatchExhaustiveEnumerationAfterEveryCommit) {
  // Ten ids keep every state within reach of enumeration (DEVELOPERS.md: about 12 vertices).
  TempDir dir;
  std::size_t compared = 0;
  std::size_t without_perfect_matching = 0;
  for (const std::uint64_t seed : {1u, 2u, 3u}) {
    const GeneratedScript script = random_script(seed, 150, 10);
    for (const Mode mode : {Mode::max_weight, Mode::max_cardinality, Mode::perfect}) {
      SCOPED_TRACE(std::string(mode_name(mode)) + " seed " + std::to_string(seed));
      const RunResult run = replay(dir, script.text, {"--mode", mode_name(mode)});
      ASSERT_EQ(run.exit_code, 0) << run.err;
      const std::vector<CommitLine> commits = commit_lines(run.out);
      ASSERT_EQ(commits.size(), script.after_commit.size());
      for (std::size_t i = 0; i < commits.size(); ++i) {
        SCOPED_TRACE("commit " + std::to_string(i + 1));
        std::optional<Optimum> optimum = exhaustive(script.after_commit[i], mode);
        EXPECT_EQ(commits[i].no_perfect_matching, !optimum.has_value());
        without_perfect_matching += optimum.has_value() ? 0 : 1;
        ++compared;
        // Without a perfect matching the reported matching is the max-cardinality optimum.
        if (!optimum) optimum = exhaustive(script.after_commit[i], Mode::max_cardinality);
        ASSERT_TRUE(optimum.has_value());
        EXPECT_EQ(commits[i].weight, optimum->weight);
        // In max-weight mode ties leave the number of pairs open (docs/contracts.md §2).
        if (mode != Mode::max_weight) {
          EXPECT_EQ(commits[i].pairs, optimum->pairs);
        }
      }
    }
  }
  // The scripts reach both kinds of perfect-mode commit, and enough commits to mean something.
  EXPECT_GT(compared, 100u);
  EXPECT_GT(without_perfect_matching, 0u);
  EXPECT_LT(without_perfect_matching, compared / 3);
}

TEST(ReplayCommand, VerifyAddsNoOutput) {
  TempDir dir;
  const GeneratedScript script = random_script(77, 120, 20);
  const std::string path = dir.write("random.events", script.text);
  const RunResult plain = run_yoke(dir, {"replay", path, "--diffs"});
  const RunResult verified = run_yoke(dir, {"replay", path, "--diffs", "--verify"});
  ASSERT_EQ(plain.exit_code, 0) << plain.err;
  ASSERT_EQ(verified.exit_code, 0) << verified.err;
  EXPECT_EQ(masked(plain.out), masked(verified.out));
  EXPECT_EQ(verified.err, "");
}

}  // namespace
}  // namespace yoke::cli::testing
