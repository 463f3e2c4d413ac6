// The wording of explanations (explanation_text.h): halves printed exactly, the mode's offset
// taken out of the price, unpaired vertices, ties, and a negative slack refused. The expected
// values are worked out by hand in the comments.
#include <gtest/gtest.h>

#include <cstdint>
#include <limits>
#include <string>

#include "tools/cli/cli_error.h"
#include "tools/cli/explanation_text.h"

namespace yoke::cli {
namespace {

Alternative alternative(VertexKey other, Weight w, Weight slack_x2,
                        std::optional<VertexKey> other_mate = std::nullopt) {
  Alternative out;
  out.other = other;
  out.w = w;
  out.slack2 = slack_x2;
  out.other_mate = other_mate;
  return out;
}

TEST(ExplanationText, HalvesAreExact) {
  EXPECT_EQ(half_text(0), "0");
  EXPECT_EQ(half_text(8), "4");
  EXPECT_EQ(half_text(87), "43.5");
  EXPECT_EQ(half_text(1), "0.5");
  EXPECT_EQ(half_text(-1), "-0.5");  // not "0.5" nor "-0": the sign of a half survives
  EXPECT_EQ(half_text(-3), "-1.5");
  EXPECT_EQ(half_text(-8), "-4");
  // 2^53 + 1 doubled: a double would round it; the text does not.
  EXPECT_EQ(half_text((std::int64_t{1} << 53) + 1), "4503599627370496.5");
  EXPECT_EQ(half_text(std::numeric_limits<std::int64_t>::min()), "-4611686018427387904");
}

TEST(ExplanationText, PairedWithAlternatives) {
  // 12 paired with 40 at weight 87, dual 43.5 (doubled 87). 55: weight 80, slack 2 (doubled
  // 4), paired with 9. 61: weight 44, slack 0.5 (doubled 1), unpaired.
  VertexExplanation explanation;
  explanation.mate = 40;
  explanation.pair_weight = 87;
  explanation.dual2 = 87;
  explanation.alternatives = {alternative(55, 80, 4, 9), alternative(61, 44, 1)};
  EXPECT_EQ(explanation_text(12, explanation),
            "12 is paired with 40 (weight 87). Its price is 43.5.\n"
            "Closest alternatives, least slack first:\n"
            "  55 (weight 80): 2 short of winning (slack 2); 55 is paired with 9\n"
            "  61 (weight 44): 0.5 short of winning (slack 0.5); 61 is unpaired\n" +
                std::string(slack_meaning()) + "\n");
}

TEST(ExplanationText, UnpairedVertex) {
  VertexExplanation alone;
  EXPECT_EQ(explanation_text(7, alone), "7 is unpaired. Its price is 0.\nNo edges.\n");

  VertexExplanation paired_no_rivals;
  paired_no_rivals.mate = 8;
  paired_no_rivals.pair_weight = 3;
  paired_no_rivals.dual2 = 3;
  EXPECT_EQ(explanation_text(7, paired_no_rivals),
            "7 is paired with 8 (weight 3). Its price is 1.5.\nNo other edges.\n");

  // Unpaired with a negative-weight edge at slack 5 (u = 0 on both ends, w = -5).
  VertexExplanation shunned;
  shunned.alternatives = {alternative(3, -5, 10)};
  const std::string text = explanation_text(7, shunned);
  EXPECT_NE(text.find("7 is unpaired. Its price is 0.\n"), std::string::npos) << text;
  EXPECT_NE(text.find("  3 (weight -5): 5 short of winning (slack 5); 3 is unpaired\n"),
            std::string::npos)
      << text;
}

TEST(ExplanationText, TiesSayTied) {
  // Two alternatives at slack 0, listed in the order given (the engine orders ties by key).
  VertexExplanation explanation;
  explanation.mate = 2;
  explanation.pair_weight = 6;
  explanation.dual2 = 6;
  explanation.alternatives = {alternative(4, 6, 0, 5), alternative(9, 6, 0)};
  const std::string text = explanation_text(1, explanation);
  const auto first = text.find("  4 (weight 6): tied (slack 0): another optimum may pair them; "
                               "4 is paired with 5\n");
  const auto second =
      text.find("  9 (weight 6): tied (slack 0): another optimum may pair them; 9 is unpaired\n");
  ASSERT_NE(first, std::string::npos) << text;
  ASSERT_NE(second, std::string::npos) << text;
  EXPECT_LT(first, second);
}

TEST(ExplanationText, OffsetLeavesThePlainPrice) {
  // max-cardinality: inside the pool every weight carries the offset 7, so the doubled duals
  // of a pair's two ends (outside blossoms) add up to 2 x (w + 7): each end carries 7 of the
  // doubled offset. A doubled dual of 15 is 15 - 7 = 8 doubled plain units: price 4.
  VertexExplanation explanation;
  explanation.mate = 2;
  explanation.pair_weight = 6;
  explanation.dual2 = 15;
  explanation.weight_offset = 7;
  EXPECT_EQ(price_x2(explanation), 8);
  EXPECT_NE(explanation_text(1, explanation).find("Its price is 4.\n"), std::string::npos);
  explanation.dual2 = 14;  // 14 - 7 = 7 doubled: 3.5
  EXPECT_NE(explanation_text(1, explanation).find("Its price is 3.5.\n"), std::string::npos);
}

TEST(ExplanationText, ChurnBonusIsNamed) {
  // A standing pair of weight 6 kept with a bonus of 4: the duals count 10, price 5 here.
  VertexExplanation explanation;
  explanation.mate = 2;
  explanation.pair_weight = 6;
  explanation.pair_bonus = 4;
  explanation.dual2 = 10;
  EXPECT_EQ(explanation_text(1, explanation),
            "1 is paired with 2 (weight 6, plus a bonus of 4 for keeping a standing pair). "
            "Its price is 5.\nNo other edges.\n");
}

TEST(ExplanationText, AHeldPairHasNoPrice) {
  // query.proto, Explanation.held: fixed by a hold, outside the optimisation. A max-cardinality
  // pool's offset would otherwise show as a price of -offset / 2.
  VertexExplanation explanation;
  explanation.mate = 2;
  explanation.pair_weight = 6;
  explanation.weight_offset = 21;
  explanation.held = true;
  EXPECT_EQ(explanation_text(1, explanation),
            "1 is held with 2 (weight 6): the pair stays until it is released, whatever the "
            "weights, so it has no price and no alternatives.\n");
  EXPECT_EQ(json_line(vertex_explanation_json(1, explanation)),
            "{\"vertex\":1,\"present\":true,\"mate\":2,\"pair_weight\":6,\"pair_bonus\":0,"
            "\"weight_offset\":21,\"dual_x2\":0,\"price\":null,\"alternatives\":[],"
            "\"held\":true}");
  yoke::v1::Explanation wire;
  wire.set_mate(2);
  wire.set_held(true);
  EXPECT_TRUE(explanation_from_wire(wire).held);
}

TEST(ExplanationText, NegativeSlackIsRefused) {
  VertexExplanation explanation;
  explanation.alternatives = {alternative(3, 10, -1)};
  EXPECT_THROW(explanation_text(5, explanation), CliError);
  EXPECT_THROW(vertex_explanation_json(5, explanation), CliError);
}

TEST(ExplanationText, JsonForm) {
  VertexExplanation explanation;
  explanation.mate = 40;
  explanation.pair_weight = 87;
  explanation.dual2 = 87;
  explanation.alternatives = {alternative(55, 80, 4, 9), alternative(61, 44, 1)};
  EXPECT_EQ(json_line(vertex_explanation_json(12, explanation)),
            "{\"vertex\":12,\"present\":true,\"mate\":40,\"pair_weight\":87,\"pair_bonus\":0,"
            "\"weight_offset\":0,\"dual_x2\":87,\"price\":43.5,\"alternatives\":[{\"other\":55,"
            "\"weight\":80,\"slack\":2,\"slack_x2\":4,\"other_mate\":9},{\"other\":61,"
            "\"weight\":44,\"slack\":0.5,\"slack_x2\":1,\"other_mate\":null}]}");
  VertexExplanation alone;
  EXPECT_EQ(json_line(vertex_explanation_json(7, alone)),
            "{\"vertex\":7,\"present\":true,\"mate\":null,\"pair_weight\":null,\"pair_bonus\":0,"
            "\"weight_offset\":0,\"dual_x2\":0,\"price\":0,\"alternatives\":[]}");
  // The offset is in dual_x2, not in the price: (15 - 7) / 2 = 4.
  VertexExplanation offset;
  offset.mate = 2;
  offset.pair_weight = 6;
  offset.dual2 = 15;
  offset.weight_offset = 7;
  EXPECT_EQ(json_line(vertex_explanation_json(1, offset)),
            "{\"vertex\":1,\"present\":true,\"mate\":2,\"pair_weight\":6,\"pair_bonus\":0,"
            "\"weight_offset\":7,\"dual_x2\":15,\"price\":4,\"alternatives\":[]}");
}

TEST(ExplanationText, FromTheWire) {
  yoke::v1::Explanation wire;
  wire.set_vertex(12);
  wire.set_mate(40);
  wire.set_pair_weight(87);
  wire.set_dual_x2(95);
  wire.set_weight_offset(8);
  yoke::v1::Alternative& rival = *wire.add_alternatives();
  rival.set_other(55);
  rival.set_weight(80);
  rival.set_slack_x2(4);
  const VertexExplanation got = explanation_from_wire(wire);
  ASSERT_TRUE(got.mate.has_value());
  EXPECT_EQ(*got.mate, 40u);
  EXPECT_EQ(got.pair_weight, 87);
  EXPECT_EQ(price_x2(got), 87);
  ASSERT_EQ(got.alternatives.size(), 1u);
  EXPECT_EQ(got.alternatives[0].other, 55u);
  EXPECT_FALSE(got.alternatives[0].other_mate.has_value());
}

}  // namespace
}  // namespace yoke::cli
