// The edge-list reader: accepted forms, dense numbering, and every rejected form with its line;
// the writer's lines read back as the edges written.
#include <gtest/gtest.h>

#include <algorithm>
#include <limits>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "tools/cli/input_files.h"
#include "tools/formats/edge_list_reader.h"
#include "tools/formats/edge_list_writer.h"

namespace yoke::formats {
namespace {

// The error the loader reports for `text`; fails the test if it accepts it.
EdgeListError edge_list_error(const std::string& text) {
  try {
    parse_edge_list(text);
  } catch (const EdgeListError& error) {
    return error;
  }
  ADD_FAILURE() << "accepted: " << text;
  return EdgeListError(0, "accepted");
}

TEST(EdgeList, ParsesEdgesInFileOrderWithDenseIdsByFirstAppearance) {
  const EdgeList list = parse_edge_list("30 10 5\n10 20 -7\n20 30 0\n");
  EXPECT_EQ(list.external_ids, (std::vector<std::uint64_t>{30, 10, 20}));
  ASSERT_EQ(list.edges.size(), 3u);
  EXPECT_EQ(list.edges[0].a, 0u);
  EXPECT_EQ(list.edges[0].b, 1u);
  EXPECT_EQ(list.edges[0].w, 5);
  EXPECT_EQ(list.edges[1].a, 1u);
  EXPECT_EQ(list.edges[1].b, 2u);
  EXPECT_EQ(list.edges[1].w, -7);
  EXPECT_EQ(list.edges[2].a, 2u);
  EXPECT_EQ(list.edges[2].b, 0u);
  EXPECT_EQ(list.edges[2].w, 0);
}

TEST(EdgeList, IgnoresBlankLinesAndComments) {
  const EdgeList list = parse_edge_list(
      "# Vardolune, harbour shift\n"
      "\n"
      "   \t\n"
      "   # an indented comment 1 2 3\n"
      "1 2 3\n"
      "\t#tab then comment\n"
      "2 3 4\n");
  EXPECT_EQ(list.edges.size(), 2u);
  EXPECT_EQ(list.external_ids.size(), 3u);
}

TEST(EdgeList, AcceptsTabsRunsOfSpacesCrlfAndNoFinalNewline) {
  const EdgeList list = parse_edge_list("  1\t2   3 \r\n4 5 6\r\n7 8 9");
  ASSERT_EQ(list.edges.size(), 3u);
  EXPECT_EQ(list.edges[0].w, 3);
  EXPECT_EQ(list.edges[1].w, 6);
  EXPECT_EQ(list.edges[2].w, 9);
}

TEST(EdgeList, EmptyInputIsAnEmptyGraph) {
  EXPECT_TRUE(parse_edge_list("").edges.empty());
  EXPECT_TRUE(parse_edge_list("# nothing\n\n").external_ids.empty());
}

TEST(EdgeList, AcceptsTheFullUnsignedIdRangeAndSparseIds) {
  const EdgeList list = parse_edge_list(
      "18446744073709551615 0 1\n"
      "0 9000000000000000000 2\n");
  EXPECT_EQ(list.external_ids,
            (std::vector<std::uint64_t>{18446744073709551615ULL, 0, 9000000000000000000ULL}));
}

TEST(EdgeList, AcceptsTheFullSignedWeightRange) {
  // Bounds of the engine are checked by solve() per mode, not by the loader.
  const EdgeList list = parse_edge_list(
      "1 2 -9223372036854775808\n"
      "2 3 9223372036854775807\n"
      "3 4 -1\n");
  EXPECT_EQ(list.edges[0].w, std::numeric_limits<std::int64_t>::min());
  EXPECT_EQ(list.edges[1].w, std::numeric_limits<std::int64_t>::max());
  EXPECT_EQ(list.edges[2].w, -1);
}

TEST(EdgeList, RejectsWrongFieldCounts) {
  const EdgeListError two = edge_list_error("1 2 3\n# fine\n1 3\n");
  EXPECT_EQ(two.line(), 3u);
  EXPECT_EQ(two.problem(), "expected 3 fields 'U V W', found 2");

  const EdgeListError four = edge_list_error("1 2 3 4\n");
  EXPECT_EQ(four.line(), 1u);
  EXPECT_EQ(four.problem(), "expected 3 fields 'U V W', found 4");

  // A comment after the data is not a comment line: it adds fields.
  EXPECT_EQ(edge_list_error("\n1 2 3 # note\n").line(), 2u);
}

TEST(EdgeList, RejectsNonNumericIds) {
  const EdgeListError letters = edge_list_error("1 2 3\nabc 2 3\n");
  EXPECT_EQ(letters.line(), 2u);
  EXPECT_EQ(letters.problem(), "vertex id 'abc' is not a non-negative integer");

  const EdgeListError decimal = edge_list_error("1 1.5 3\n");
  EXPECT_EQ(decimal.line(), 1u);
  EXPECT_EQ(decimal.problem(), "vertex id '1.5' is not a non-negative integer");

  EXPECT_EQ(edge_list_error("-4 2 3\n").problem(), "vertex id '-4' is not a non-negative integer");
  EXPECT_EQ(edge_list_error("0x10 2 3\n").problem(), "vertex id '0x10' is not a non-negative integer");
}

TEST(EdgeList, RejectsIdsBeyondSixtyFourBits) {
  const EdgeListError huge = edge_list_error("\n\n99999999999999999999 1 3\n");
  EXPECT_EQ(huge.line(), 3u);
  EXPECT_EQ(huge.problem(),
            "vertex id '99999999999999999999' is out of range (0 .. 18446744073709551615)");
  EXPECT_EQ(edge_list_error("1 18446744073709551616 3\n").line(), 1u);
}

TEST(EdgeList, RejectsBadWeights) {
  const EdgeListError decimal = edge_list_error("1 2 3\n3 4 1.5\n");
  EXPECT_EQ(decimal.line(), 2u);
  EXPECT_EQ(decimal.problem(), "weight '1.5' is not an integer");

  EXPECT_EQ(edge_list_error("1 2 abc\n").problem(), "weight 'abc' is not an integer");
  EXPECT_EQ(edge_list_error("1 2 5e3\n").problem(), "weight '5e3' is not an integer");

  const EdgeListError huge = edge_list_error("1 2 99999999999999999999\n");
  EXPECT_EQ(huge.line(), 1u);
  EXPECT_EQ(huge.problem(), "weight '99999999999999999999' is out of range "
                            "(-9223372036854775808 .. 9223372036854775807)");
  EXPECT_EQ(edge_list_error("1 2 9223372036854775808\n").line(), 1u);
  EXPECT_EQ(edge_list_error("1 2 -9223372036854775809\n").line(), 1u);
}

TEST(EdgeList, ShowsUnprintableAndLongTokensSafely) {
  EXPECT_EQ(edge_list_error(std::string("1 2 \x01x\n")).problem(), "weight '\\x01x' is not an integer");
  const std::string long_token(100, '7');
  const std::string problem = edge_list_error("1 2 " + long_token + "\n").problem();
  EXPECT_NE(problem.find("...'"), std::string::npos) << problem;
  EXPECT_LT(problem.size(), 120u);
}

TEST(EdgeList, RejectsSelfLoops) {
  const EdgeListError loop = edge_list_error("1 2 3\n\n7 7 10\n");
  EXPECT_EQ(loop.line(), 3u);
  EXPECT_EQ(loop.problem(), "self loop on vertex 7");
}

TEST(EdgeList, RejectsDuplicateEdgesNamingTheFirstLine) {
  const EdgeListError same = edge_list_error("1 2 3\n2 3 4\n# again\n1 2 5\n");
  EXPECT_EQ(same.line(), 4u);
  EXPECT_EQ(same.problem(), "duplicate edge between 1 and 2 (first given on line 1)");

  const EdgeListError reversed = edge_list_error("5 6 1\n\n6 5 1\n");
  EXPECT_EQ(reversed.line(), 3u);
  EXPECT_EQ(reversed.problem(), "duplicate edge between 6 and 5 (first given on line 1)");
}

TEST(EdgeList, ReportsTheEarliestDuplicate) {
  const EdgeListError error = edge_list_error(
      "1 2 1\n"
      "3 4 1\n"
      "5 6 1\n"
      "6 5 1\n"    // line 4: repeats line 3
      "2 1 1\n"    // line 5: repeats line 1, but comes later
      "4 3 1\n");
  EXPECT_EQ(error.line(), 4u);
  EXPECT_EQ(error.problem(), "duplicate edge between 6 and 5 (first given on line 3)");
}

TEST(EdgeList, ReportsTheEarliestErrorOfAnyKind) {
  // A duplicate before a malformed line wins, and a malformed line before a duplicate wins.
  EXPECT_EQ(edge_list_error("1 2 3\n2 1 3\nbad line here now\n").line(), 2u);
  EXPECT_EQ(edge_list_error("1 2 3\nbad\n2 1 3\n").line(), 2u);
  EXPECT_EQ(edge_list_error("1 2 3\n4 4 1\n2 1 3\n").problem(), "self loop on vertex 4");
}

TEST(EdgeList, ArbitraryTextIsParsedOrRejectedWithALine) {
  // Random texts over the characters that matter to the parser: never a crash, never another
  // exception, and an error line always inside the text.
  std::mt19937 random(7);
  const std::string alphabet = "0123456789  \t\n\n#-+.xe\r";
  for (int round = 0; round < 2000; ++round) {
    std::string text;
    const std::size_t length = random() % 60;
    for (std::size_t i = 0; i < length; ++i) text += alphabet[random() % alphabet.size()];
    const auto lines = static_cast<std::size_t>(std::count(text.begin(), text.end(), '\n')) + 1;
    try {
      const EdgeList list = parse_edge_list(text);
      for (const Edge& e : list.edges) {
        ASSERT_LT(e.a, list.external_ids.size());
        ASSERT_LT(e.b, list.external_ids.size());
        ASSERT_NE(e.a, e.b);
      }
    } catch (const EdgeListError& error) {
      ASSERT_GE(error.line(), 1u) << text;
      ASSERT_LE(error.line(), lines) << text;
    }
  }
}

TEST(EdgeList, ErrorTextNamesTheLine) {
  EXPECT_STREQ(edge_list_error("1 2\n").what(), "line 1: expected 3 fields 'U V W', found 2");
}

TEST(EdgeList, WrittenEdgesReadBackWithTheirIds) {
  const std::vector<Edge> edges{{0, 1, 7}, {2, 1, std::numeric_limits<Weight>::min()}};
  const std::vector<std::uint64_t> ids{100, std::numeric_limits<std::uint64_t>::max(), 5};
  std::ostringstream text;
  write_edge_list(text, edges, ids);
  EXPECT_EQ(text.str(),
            "100 18446744073709551615 7\n5 18446744073709551615 -9223372036854775808\n");
  const EdgeList list = parse_edge_list(text.str());
  EXPECT_EQ(list.external_ids, (std::vector<std::uint64_t>{100, ids[1], 5}));
  ASSERT_EQ(list.edges.size(), 2u);
  EXPECT_EQ(list.edges[1].w, edges[1].w);
  EXPECT_THROW(write_edge_list(text, edges, std::vector<std::uint64_t>{1, 2}),
               std::invalid_argument);
}

}  // namespace
}  // namespace yoke::formats
