// Basic value types of the engine: weights, dense vertex indices, modes, input bounds.
#pragma once

#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>

namespace yoke {

// Edge weights are exact 64-bit integers. The engine stores every dual doubled (2u, 2z), so
// all intermediate values stay integral.
using Weight = std::int64_t;

// Dense internal vertex index, 0 .. vertex_count-1. External ids are mapped at the edge of the
// system (the edge-list reader in tools/formats/, a pool's PoolGraph).
using Vertex = std::uint32_t;
using EdgeIndex = std::uint32_t;

// Exact accumulator for sums of weights and duals (checker, objective).
__extension__ typedef __int128 Int128;

inline constexpr Vertex kNoVertex = std::numeric_limits<Vertex>::max();
inline constexpr EdgeIndex kNoEdge = std::numeric_limits<EdgeIndex>::max();

// Largest accepted |w| of one edge, after the mode's transformation. Doubled duals of nested
// blossoms stay below 2^62 with this bound, so no engine computation can overflow.
inline constexpr Weight kMaxAbsWeight = Weight{1} << 52;

// Largest accepted (number of pairs) x (largest |w|): keeps every matching's total weight and
// the dual objective inside int64.
inline constexpr Weight kMaxTotalWeight = Weight{1} << 61;

// Largest accepted number of vertices, and of edges: indices leave two bits spare in the
// engine's event queue.
inline constexpr std::size_t kMaxVertices = std::size_t{1} << 30;
inline constexpr std::size_t kMaxEdges = std::size_t{1} << 30;

enum class Mode {
  max_weight,       // any cardinality; edges of weight <= 0 are never worth taking
  max_cardinality,  // most pairs first, then most weight
  perfect,          // every vertex matched, most weight; reports when that is impossible
};

const char* mode_name(Mode mode);
// Decimal text of an exact 128-bit value (for messages).
std::string int128_text(Int128 value);
// Parses "max-weight", "max-cardinality" or "perfect"; throws InputError otherwise.
Mode parse_mode(const std::string& text);

// Bad input that the caller can report to a user: a weight out of range, an unknown mode.
class InputError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace yoke
