// A vertex's explanation (Pool::explain) in words a person reads without knowing the duals:
// its pair and the pair's weight, its price in the pool's plain weights, and the alternatives
// that came closest with how far each fell short. `yoke replay --explain` prints it for a past
// state, `yoke query explain --text` for the daemon's current state. The JSON form below is the
// one shape both commands print (`yoke replay --explain V --json`, `yoke query explain`).
//
// Units (the one place that states them): Pool::explain and the wire (query.proto
// Explanation) report doubled values, named `..._x2`: dual_x2 is twice the vertex's dual over
// the weights plus the mode's offset (weight_offset, non-zero only in max-cardinality and
// perfect mode), as the engine solves them. The price is the vertex's share of the plain
// weights: price = (dual_x2 - weight_offset) / 2, in max-weight mode simply the dual; the two
// ends of a pair outside blossoms add up to its weight. A slack needs no conversion (the offset
// cancels in it): slack = slack_x2 / 2, and an alternative's weight must rise by its slack
// before taking it could pay. The text and the JSON print the same price and slack; halves are
// printed as ".5", never rounded.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "yoke/pool.h"
#include "proto_json.h"

namespace yoke::cli {

// A doubled value in plain units: 87 -> "43.5", -3 -> "-1.5", 8 -> "4".
std::string half_text(Weight doubled);

// The vertex's price in plain weights, doubled: dual_x2 - weight_offset (exact).
Weight price_x2(const VertexExplanation& explanation);

// One line that says what slack means (printed under every text explanation).
const char* slack_meaning();

// The explanation of `vertex` as text, several lines ending in '\n':
//
//   12 is paired with 40 (weight 87). Its price is 43.5.
//   Closest alternatives, least slack first:
//     55 (weight 80): 2 short of winning (slack 2); 55 is paired with 9
//     61 (weight 44): tied (slack 0): another optimum may pair them; 61 is unpaired
//   Slack: ...
//
// An unpaired vertex reads "12 is unpaired. Its price is 0."; with no alternative to list the
// second line is "No other edges." ("No edges." when unpaired). A pair that carries the pool's
// churn bonus says so: "(weight 87, plus a bonus of 5 for keeping a standing pair)"; the price
// and the slacks count that bonus. Throws CliError when an alternative has a negative slack:
// the prices would not prove the state optimal, which a pool that passes its certificate check
// never reports.
std::string explanation_text(VertexKey vertex, const VertexExplanation& explanation);

// The keys of the JSON form, for the help texts of both commands that print it.
extern const char* const kExplanationJsonHelp;

// The JSON form (docs/formats.md, "Postmortem JSON"): {"vertex","present":true,"mate" (null:
// unpaired),"pair_weight" (null when unpaired),"pair_bonus","weight_offset","dual_x2","price",
// "alternatives":[{"other","weight","slack","slack_x2","other_mate"},...]}. price and slack are numbers with at most one decimal
// (.5); dual_x2 and slack_x2 are exact integers (see Units above). Throws CliError on a
// negative slack, as above.
Json vertex_explanation_json(VertexKey vertex, const VertexExplanation& explanation);

// The daemon's reply (query.proto Explanation) as the engine's struct, for the same wording.
VertexExplanation explanation_from_wire(const yoke::v1::Explanation& explanation);

}  // namespace yoke::cli
