// The event-script parser: every verb, the accepted layouts, batching (also the implicit final
// commit), the pre-scan that sizes a pool, and every rejected form with its line; the writer's
// lines read back as the events written.
#include <gtest/gtest.h>

#include <algorithm>
#include <limits>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "run_yoke.h"
#include "tools/cli/cli_error.h"
#include "tools/cli/input_files.h"
#include "tools/formats/event_script_reader.h"
#include "tools/formats/event_script_writer.h"

namespace yoke::formats {
namespace {

// The error the parser reports for `text`; fails the test if it accepts it.
EventScriptError script_error(const std::string& text) {
  try {
    parse_event_script(text);
  } catch (const EventScriptError& error) {
    return error;
  }
  ADD_FAILURE() << "accepted: " << text;
  return EventScriptError(0, "accepted");
}

void expect_event(const Event& event, EventKind kind, VertexKey u, VertexKey v, Weight w) {
  EXPECT_EQ(event.kind, kind);
  EXPECT_EQ(event.u, u);
  EXPECT_EQ(event.v, v);
  EXPECT_EQ(event.w, w);
}

TEST(EventScript, ParsesEveryVerbIntoOneBatch) {
  const EventScript script = parse_event_script(
      "add 7\n"
      "set 7 8 12\n"
      "unset 8 7\n"
      "remove 7\n"
      "commit\n");
  ASSERT_EQ(script.batches.size(), 1u);
  const ScriptBatch& batch = script.batches[0];
  ASSERT_EQ(batch.events.size(), 4u);
  expect_event(batch.events[0], EventKind::add_vertex, 7, 0, 0);
  expect_event(batch.events[1], EventKind::set_edge, 7, 8, 12);
  expect_event(batch.events[2], EventKind::unset_edge, 8, 7, 0);
  expect_event(batch.events[3], EventKind::remove_vertex, 7, 0, 0);
  EXPECT_EQ(batch.lines, (std::vector<std::size_t>{1, 2, 3, 4}));
  EXPECT_EQ(batch.commit_line, 5u);
  EXPECT_EQ(script.event_count, 4u);
}

TEST(EventScript, ParsesHoldAndRelease) {
  // A courier held to one order across commits, then released: the pair is named in either
  // order, and neither line carries a weight.
  const EventScript script = parse_event_script(
      "set 3 9 40\n"
      "hold 3 9\n"
      "commit\n"
      "release 9 3\t# the order left the terminal\n"
      "commit\n");
  ASSERT_EQ(script.batches.size(), 2u);
  ASSERT_EQ(script.batches[0].events.size(), 2u);
  expect_event(script.batches[0].events[1], EventKind::hold_pair, 3, 9, 0);
  EXPECT_EQ(script.batches[0].lines, (std::vector<std::size_t>{1, 2}));
  ASSERT_EQ(script.batches[1].events.size(), 1u);
  expect_event(script.batches[1].events[0], EventKind::release_pair, 9, 3, 0);
  EXPECT_EQ(script.batches[1].lines, (std::vector<std::size_t>{4}));
  EXPECT_EQ(script.event_count, 3u);
  EXPECT_EQ(script.distinct_vertices, 2u);
  EXPECT_EQ(script.largest_abs_weight, 40u);

  // Holds of ids no other line mentions still count for the pre-scan (the pool refuses them,
  // not the parser).
  const EventScript unknown = parse_event_script("hold 1 2\nrelease 3 4\n");
  EXPECT_EQ(unknown.distinct_vertices, 4u);
  EXPECT_EQ(unknown.largest_abs_weight, 0u);
}

TEST(EventScript, IgnoresBlankLinesCommentsAndTrailingComments) {
  const EventScript script = parse_event_script(
      "# Vardolune, night shift at the ferry terminal\n"
      "\n"
      "   \t\n"
      "   # an indented comment: set 1 2 3\n"
      "set 1 2 3   # first courier meets the 23:10 ferry\n"
      "add 4\t#no blank needed after the '#'\n"
      "commit # end of the first wave\n"
      "\t#tab then comment\n");
  ASSERT_EQ(script.batches.size(), 1u);
  ASSERT_EQ(script.batches[0].events.size(), 2u);
  EXPECT_EQ(script.batches[0].lines, (std::vector<std::size_t>{5, 6}));
  EXPECT_EQ(script.batches[0].commit_line, 7u);
  EXPECT_EQ(script.batches[0].events[1].kind, EventKind::add_vertex);
  EXPECT_EQ(script.batches[0].events[1].u, 4u);
}

TEST(EventScript, AHashInsideAFieldIsNotAComment) {
  // Only a '#' that starts a token starts a comment: '3#x' is a malformed weight.
  EXPECT_EQ(script_error("set 1 2 3#x\n").problem(), "weight '3#x' is not an integer");
}

TEST(EventScript, AcceptsCrlfTabsRunsOfBlanksAndNoFinalNewline) {
  const EventScript script =
      parse_event_script("set\t1  2\t\t3 \r\ncommit\r\n  add   9\r\nremove 9\t\r\ncommit");
  ASSERT_EQ(script.batches.size(), 2u);
  expect_event(script.batches[0].events[0], EventKind::set_edge, 1, 2, 3);
  EXPECT_EQ(script.batches[0].commit_line, 2u);
  EXPECT_EQ(script.batches[1].lines, (std::vector<std::size_t>{3, 4}));
  EXPECT_EQ(script.batches[1].commit_line, 5u);
}

TEST(EventScript, AcceptsTheFullIdAndWeightRanges) {
  const EventScript script = parse_event_script(
      "set 18446744073709551615 0 -9223372036854775808\n"
      "set 0 1 9223372036854775807\n"
      "set 1 2 -1\n"
      "add 18446744073709551614\n");
  const auto& events = script.batches.at(0).events;
  expect_event(events[0], EventKind::set_edge, std::numeric_limits<std::uint64_t>::max(), 0,
               std::numeric_limits<std::int64_t>::min());
  EXPECT_EQ(events[1].w, std::numeric_limits<std::int64_t>::max());
  EXPECT_EQ(events[2].w, -1);
  EXPECT_EQ(events[3].u, 18446744073709551614ULL);
  EXPECT_EQ(script.largest_abs_weight, std::uint64_t{1} << 63);
}

TEST(EventScript, EventsAfterTheLastCommitFormAFinalBatch) {
  const EventScript script = parse_event_script("set 1 2 3\ncommit\nadd 5\n# tail\n");
  ASSERT_EQ(script.batches.size(), 2u);
  EXPECT_EQ(script.batches[1].lines, (std::vector<std::size_t>{3}));
  EXPECT_EQ(script.batches[1].commit_line, 0u) << "0 marks the commit at end of file";

  // Nothing after the last commit but comments: no extra batch.
  EXPECT_EQ(parse_event_script("set 1 2 3\ncommit\n# done\n\n").batches.size(), 1u);
  // A script without any commit is one batch.
  EXPECT_EQ(parse_event_script("add 1\nadd 2\n").batches.size(), 1u);
}

TEST(EventScript, EmptyScriptsAndEmptyBatches) {
  EXPECT_TRUE(parse_event_script("").batches.empty());
  EXPECT_TRUE(parse_event_script("# nothing yet\n\n").batches.empty());

  const EventScript script = parse_event_script("commit\nset 1 2 3\ncommit\ncommit\n");
  ASSERT_EQ(script.batches.size(), 3u);
  EXPECT_TRUE(script.batches[0].events.empty());
  EXPECT_EQ(script.batches[0].commit_line, 1u);
  EXPECT_EQ(script.batches[1].events.size(), 1u);
  EXPECT_TRUE(script.batches[2].events.empty());
  EXPECT_EQ(script.batches[2].commit_line, 4u);
}

TEST(EventScript, PreScanCountsDistinctIdsOfEveryVerbAndTheLargestMagnitude) {
  const EventScript script = parse_event_script(
      "add 100\n"           // 100
      "set 100 200 -40\n"   // 200
      "set 200 300 25\n"    // 300
      "commit\n"
      "unset 300 400\n"     // 400 (rejected later by the pool, still counted)
      "remove 500\n"        // 500
      "add 100\n"
      "set 18446744073709551615 100 39\n");  // 2^64-1
  EXPECT_EQ(script.distinct_vertices, 6u);
  EXPECT_EQ(script.largest_abs_weight, 40u) << "|-40| beats 39 and 25";
  EXPECT_EQ(script.event_count, 7u);

  const EventScript no_weights = parse_event_script("add 1\nadd 1\n");
  EXPECT_EQ(no_weights.distinct_vertices, 1u);
  EXPECT_EQ(no_weights.largest_abs_weight, 0u);
}

TEST(EventScript, RejectsUnknownVerbs) {
  const EventScriptError error = script_error("add 1\n\nmove 1 2\n");
  EXPECT_EQ(error.line(), 3u);
  EXPECT_EQ(error.problem(),
            "unknown verb 'move' (expected add, set, unset, remove, hold, release or commit)");
  EXPECT_EQ(script_error("SET 1 2 3\n").problem(),
            "unknown verb 'SET' (expected add, set, unset, remove, hold, release or commit)");
  EXPECT_EQ(script_error("1 2 3\n").line(), 1u) << "an edge-list line is not an event";
}

TEST(EventScript, RejectsWrongFieldCountsForEachVerb) {
  EXPECT_EQ(script_error("add\n").problem(), "'add U' takes 1 field after the verb, found 0");
  EXPECT_EQ(script_error("add 1 2\n").problem(), "'add U' takes 1 field after the verb, found 2");
  EXPECT_EQ(script_error("set 1 2\n").problem(), "'set U V W' takes 3 fields after the verb, found 2");
  EXPECT_EQ(script_error("set 1 2 3 4\n").problem(),
            "'set U V W' takes 3 fields after the verb, found 4");
  EXPECT_EQ(script_error("unset 1\n").problem(), "'unset U V' takes 2 fields after the verb, found 1");
  EXPECT_EQ(script_error("unset 1 2 3\n").problem(),
            "'unset U V' takes 2 fields after the verb, found 3");
  EXPECT_EQ(script_error("remove\n").problem(), "'remove U' takes 1 field after the verb, found 0");
  EXPECT_EQ(script_error("hold 1\n").problem(), "'hold U V' takes 2 fields after the verb, found 1");
  EXPECT_EQ(script_error("hold 1 2 3\n").problem(),
            "'hold U V' takes 2 fields after the verb, found 3");
  EXPECT_EQ(script_error("release\n").problem(),
            "'release U V' takes 2 fields after the verb, found 0");
  EXPECT_EQ(script_error("release 1 2 3\n").problem(),
            "'release U V' takes 2 fields after the verb, found 3");
  EXPECT_EQ(script_error("commit now\n").problem(),
            "'commit' takes 0 fields after the verb, found 1");
  // The trailing comment does not count as fields.
  EXPECT_EQ(script_error("set 1 2 # 3\n").problem(),
            "'set U V W' takes 3 fields after the verb, found 2");

  const EventScriptError late = script_error("set 1 2 3\ncommit\n# next wave\nremove 1 2\n");
  EXPECT_EQ(late.line(), 4u);
}

TEST(EventScript, RejectsNonNumericIds) {
  const EventScriptError letters = script_error("set 1 2 3\nadd abc\n");
  EXPECT_EQ(letters.line(), 2u);
  EXPECT_EQ(letters.problem(), "vertex id 'abc' is not a non-negative integer");
  EXPECT_EQ(script_error("set 1 two 3\n").problem(), "vertex id 'two' is not a non-negative integer");
  EXPECT_EQ(script_error("remove -4\n").problem(), "vertex id '-4' is not a non-negative integer");
  EXPECT_EQ(script_error("unset 1.5 2\n").problem(), "vertex id '1.5' is not a non-negative integer");
  EXPECT_EQ(script_error("add 0x10\n").problem(), "vertex id '0x10' is not a non-negative integer");
  EXPECT_EQ(script_error("add +3\n").problem(), "vertex id '+3' is not a non-negative integer");
  EXPECT_EQ(script_error("hold 1 x\n").problem(), "vertex id 'x' is not a non-negative integer");
  EXPECT_EQ(script_error("release -1 2\n").problem(), "vertex id '-1' is not a non-negative integer");
  EXPECT_EQ(script_error("hold 18446744073709551616 1\n").problem(),
            "vertex id '18446744073709551616' is out of range (0 .. 18446744073709551615)");
}

TEST(EventScript, RejectsIdsBeyondSixtyFourBits) {
  const EventScriptError huge = script_error("\n\nadd 18446744073709551616\n");
  EXPECT_EQ(huge.line(), 3u);
  EXPECT_EQ(huge.problem(),
            "vertex id '18446744073709551616' is out of range (0 .. 18446744073709551615)");
  EXPECT_EQ(script_error("set 1 99999999999999999999 3\n").line(), 1u);
}

TEST(EventScript, RejectsBadWeights) {
  const EventScriptError decimal = script_error("set 1 2 3\nset 3 4 1.5\n");
  EXPECT_EQ(decimal.line(), 2u);
  EXPECT_EQ(decimal.problem(), "weight '1.5' is not an integer");
  EXPECT_EQ(script_error("set 1 2 abc\n").problem(), "weight 'abc' is not an integer");
  EXPECT_EQ(script_error("set 1 2 5e3\n").problem(), "weight '5e3' is not an integer");

  const EventScriptError high = script_error("set 1 2 9223372036854775808\n");
  EXPECT_EQ(high.problem(), "weight '9223372036854775808' is out of range "
                            "(-9223372036854775808 .. 9223372036854775807)");
  EXPECT_EQ(script_error("commit\nset 1 2 -9223372036854775809\n").line(), 2u);
}

TEST(EventScript, RejectsSelfLoops) {
  const EventScriptError loop = script_error("set 1 2 3\n\nset 5 5 1\n");
  EXPECT_EQ(loop.line(), 3u);
  EXPECT_EQ(loop.problem(), "self loop on vertex 5");
  // No edge {5,5} can ever exist, so unsetting one is as malformed.
  EXPECT_EQ(script_error("unset 5 5\n").problem(), "self loop on vertex 5");
  // Nor can a vertex be held with itself.
  const EventScriptError hold = script_error("set 1 2 3\nhold 6 6\n");
  EXPECT_EQ(hold.line(), 2u);
  EXPECT_EQ(hold.problem(), "self loop on vertex 6");
  EXPECT_EQ(script_error("release 6 6\n").problem(), "self loop on vertex 6");
}

TEST(EventScript, ReportsTheFirstBadLine) {
  EXPECT_EQ(script_error("set 1 2 3\nset 4 4 1\nfrobnicate\n").line(), 2u);
  EXPECT_EQ(script_error("set 1 2 3\nfrobnicate\nset 4 4 1\n").line(), 2u);
}

TEST(EventScript, ShowsUnprintableAndLongTokensSafely) {
  EXPECT_EQ(script_error(std::string("set 1 2 \x01x\n")).problem(),
            "weight '\\x01x' is not an integer");
  const std::string problem = script_error("add " + std::string(100, '7') + "\n").problem();
  EXPECT_NE(problem.find("...'"), std::string::npos) << problem;
  EXPECT_LT(problem.size(), 120u);
}

TEST(EventScript, ArbitraryTextIsParsedOrRejectedWithALine) {
  // Random texts over the characters that matter: never a crash or another exception, an error
  // line always inside the text, and every parsed line number inside it too.
  std::mt19937 random(11);
  const std::vector<std::string> pieces = {
      "add ", "set ", "unset ", "remove ", "hold ", "release ", "commit", "1", "2",
      " ",    "\t",   "\n",     "\n",      "#",    "-",      "x",      "\r"};
  for (int round = 0; round < 2000; ++round) {
    std::string text;
    const std::size_t length = random() % 30;
    for (std::size_t i = 0; i < length; ++i) text += pieces[random() % pieces.size()];
    const auto lines = static_cast<std::size_t>(std::count(text.begin(), text.end(), '\n')) + 1;
    try {
      const EventScript script = parse_event_script(text);
      for (const ScriptBatch& batch : script.batches) {
        ASSERT_EQ(batch.lines.size(), batch.events.size());
        for (const std::size_t line : batch.lines) ASSERT_LE(line, lines) << text;
        for (const Event& event : batch.events) {
          if (event.kind == EventKind::set_edge) {
            ASSERT_NE(event.u, event.v) << text;
          }
        }
      }
    } catch (const EventScriptError& error) {
      ASSERT_GE(error.line(), 1u) << text;
      ASSERT_LE(error.line(), lines) << text;
    }
  }
}

TEST(EventScript, LoadNamesTheFileAndLine) {
  const cli::testing::TempDir dir;
  const std::string path = dir.write("shift.events", "set 1 2 3\ncommit\nadd\n");
  try {
    cli::load_event_script(path);
    ADD_FAILURE() << "accepted";
  } catch (const cli::CliError& error) {
    EXPECT_EQ(std::string(error.what()),
              path + ":3: 'add U' takes 1 field after the verb, found 0");
  }
  EXPECT_THROW(cli::load_event_script(dir.file("missing.events")), cli::CliError);
  EXPECT_EQ(cli::load_event_script(dir.write("ok.events", "add 1\n")).batches.size(), 1u);
}

TEST(EventScript, WrittenBatchesReadBackAsTheSameEvents) {
  const std::uint64_t big = std::numeric_limits<std::uint64_t>::max();
  const Weight low = std::numeric_limits<Weight>::min();
  const std::vector<std::vector<Event>> batches{
      {{EventKind::add_vertex, big, 0, 0},
       {EventKind::set_edge, 3, big, low},
       {EventKind::unset_edge, 3, big, 0},
       {EventKind::hold_pair, 4, 3, 0}},
      {},
      {{EventKind::release_pair, 4, 3, 0}, {EventKind::remove_vertex, 4, 0, 0}}};
  std::ostringstream text;
  for (const auto& batch : batches) write_event_script(text, batch);
  EXPECT_EQ(text.str(),
            "add 18446744073709551615\nset 3 18446744073709551615 -9223372036854775808\n"
            "unset 3 18446744073709551615\nhold 4 3\ncommit\ncommit\nrelease 4 3\nremove 4\n"
            "commit\n");
  const EventScript script = parse_event_script(text.str());
  ASSERT_EQ(script.batches.size(), batches.size());
  for (std::size_t b = 0; b < batches.size(); ++b) {
    ASSERT_EQ(script.batches[b].events.size(), batches[b].size());
    for (std::size_t i = 0; i < batches[b].size(); ++i) {
      const Event& want = batches[b][i];
      expect_event(script.batches[b].events[i], want.kind, want.u, want.v, want.w);
      EXPECT_EQ(event_line(script.batches[b].events[i]), event_line(want));
    }
  }
}

}  // namespace
}  // namespace yoke::formats
