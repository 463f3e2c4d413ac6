#include "explanation_text.h"

#include <string>

#include "cli_error.h"

namespace yoke::cli {
namespace {

std::string key_text(VertexKey key) { return std::to_string(key); }

void check_slacks(VertexKey vertex, const VertexExplanation& explanation) {
  for (const Alternative& alternative : explanation.alternatives) {
    if (alternative.slack2 < 0) {
      throw CliError("the explanation of " + key_text(vertex) + " gives the edge to " +
                     key_text(alternative.other) + " a negative slack (" +
                     half_text(alternative.slack2) +
                     "): its prices do not prove the state optimal");
    }
  }
}

// A doubled value as a JSON number: an integer when it is even, else a number ending in .5.
Json half_json(Weight doubled) {
  if (doubled % 2 == 0) return Json(doubled / 2);
  return Json(static_cast<double>(doubled) / 2.0);
}

Json optional_key_json(const std::optional<VertexKey>& key) {
  return key ? Json(*key) : Json(nullptr);
}

}  // namespace

std::string half_text(Weight doubled) {
  const bool negative = doubled < 0;
  // The magnitude in unsigned arithmetic, so that even the most negative value is exact.
  const std::uint64_t magnitude =
      negative ? std::uint64_t{0} - static_cast<std::uint64_t>(doubled)
               : static_cast<std::uint64_t>(doubled);
  std::string text = negative ? "-" : "";
  text += std::to_string(magnitude / 2);
  if (magnitude % 2 != 0) text += ".5";
  return text;
}

const char* const kExplanationJsonHelp =
    "  {\"vertex\",\"present\":true,\"mate\" (null: unpaired),\"pair_weight\" (null:\n"
    "  unpaired),\"pair_bonus\",\"weight_offset\",\"dual_x2\",\"price\",\"alternatives\":\n"
    "  [{\"other\",\"weight\",\"slack\",\"slack_x2\",\"other_mate\"},...]}: the _x2 values are\n"
    "  doubled, exact integers; dual_x2 counts the mode's weight_offset, price does not:\n"
    "  price = (dual_x2 - weight_offset) / 2 and slack = slack_x2 / 2 (either may end in .5);\n"
    "  a vertex of a held pair adds \"held\":true, with price null and no alternatives";

Weight price_x2(const VertexExplanation& explanation) {
  return explanation.dual2 - explanation.weight_offset;
}

const char* slack_meaning() {
  return "Slack: how much an alternative's weight would have to rise before taking it could "
         "beat the chosen pairs (0: a tie).";
}

std::string explanation_text(VertexKey vertex, const VertexExplanation& explanation) {
  check_slacks(vertex, explanation);
  const std::string name = key_text(vertex);
  std::string out;
  if (explanation.held && explanation.mate) {
    // Fixed by a hold and outside the optimisation: no price, no alternatives to weigh.
    return name + " is held with " + key_text(*explanation.mate) + " (weight " +
           std::to_string(explanation.pair_weight) +
           "): the pair stays until it is released, whatever the weights, so it has no price "
           "and no alternatives.\n";
  }
  if (explanation.mate) {
    out += name + " is paired with " + key_text(*explanation.mate) + " (weight " +
           std::to_string(explanation.pair_weight);
    if (explanation.pair_bonus != 0) {
      out += ", plus a bonus of " + std::to_string(explanation.pair_bonus) +
             " for keeping a standing pair";
    }
    out += ").";
  } else {
    out += name + " is unpaired.";
  }
  out += " Its price is " + half_text(price_x2(explanation)) + ".\n";
  if (explanation.alternatives.empty()) {
    out += explanation.mate ? "No other edges.\n" : "No edges.\n";
    return out;
  }
  out += "Closest alternatives, least slack first:\n";
  for (const Alternative& alternative : explanation.alternatives) {
    const std::string other = key_text(alternative.other);
    out += "  " + other + " (weight " + std::to_string(alternative.w) + "): ";
    if (alternative.slack2 == 0) {
      out += "tied (slack 0): another optimum may pair them";
    } else {
      const std::string slack = half_text(alternative.slack2);
      out += slack + " short of winning (slack " + slack + ")";
    }
    out += "; " + other;
    out += alternative.other_mate ? " is paired with " + key_text(*alternative.other_mate)
                                  : std::string(" is unpaired");
    out += '\n';
  }
  out += slack_meaning();
  out += '\n';
  return out;
}

Json vertex_explanation_json(VertexKey vertex, const VertexExplanation& explanation) {
  check_slacks(vertex, explanation);
  Json alternatives = Json::array();
  for (const Alternative& alternative : explanation.alternatives) {
    alternatives.push_back(Json{{"other", alternative.other},
                                {"weight", alternative.w},
                                {"slack", half_json(alternative.slack2)},
                                {"slack_x2", alternative.slack2},
                                {"other_mate", optional_key_json(alternative.other_mate)}});
  }
  Json out{{"vertex", vertex},
           {"present", true},
           {"mate", optional_key_json(explanation.mate)},
           {"pair_weight", explanation.mate ? Json(explanation.pair_weight) : Json(nullptr)},
           {"pair_bonus", explanation.pair_bonus},
           {"weight_offset", explanation.weight_offset},
           {"dual_x2", explanation.dual2},
           {"price", explanation.held ? Json(nullptr) : half_json(price_x2(explanation))},
           {"alternatives", std::move(alternatives)}};
  if (explanation.held) out["held"] = true;  // only then, as a watched diff's "retired"
  return out;
}

VertexExplanation explanation_from_wire(const yoke::v1::Explanation& explanation) {
  VertexExplanation out;
  if (explanation.has_mate()) out.mate = explanation.mate();
  out.pair_weight = explanation.pair_weight();  // 0 when absent, as the engine's struct has it
  out.pair_bonus = explanation.pair_bonus();
  out.held = explanation.held();
  out.dual2 = explanation.dual_x2();
  out.weight_offset = explanation.weight_offset();
  for (const yoke::v1::Alternative& wire : explanation.alternatives()) {
    Alternative alternative;
    alternative.other = wire.other();
    alternative.w = wire.weight();
    alternative.slack2 = wire.slack_x2();
    if (wire.has_other_mate()) alternative.other_mate = wire.other_mate();
    out.alternatives.push_back(alternative);
  }
  return out;
}

Json explanation_json(const std::string& pool, const yoke::v1::Explanation& explanation) {
  // The writer of `yoke replay --explain --json`, behind the reply's pool and seq.
  Json out{{"pool", pool}, {"seq", explanation.seq()}};
  out.update(vertex_explanation_json(explanation.vertex(), explanation_from_wire(explanation)));
  return out;
}

}  // namespace yoke::cli
