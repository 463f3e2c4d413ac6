// Exhaustive enumeration: visits every matching of a small graph and keeps the best one for each
// mode. Independent of any matching algorithm, so it referees LEMON, NetworkX and yoke alike.
#pragma once

#include <cstddef>
#include <cstdint>

#include "yoke/graph.h"
#include "oracle_answer.h"

namespace yoke::oracle {

// Enumeration visits every matching: K_12 has 140152, K_14 has 2390480.
inline constexpr std::size_t kMaxExhaustiveVertices = 14;

struct ExhaustiveOptima {
  Answer max_weight;       // most weight; among ties, fewest pairs
  Answer max_cardinality;  // most pairs, then most weight
  Answer perfect;          // feasible iff some matching covers every vertex
  std::uint64_t matchings = 0;  // how many matchings were visited (the empty one included)

  const Answer& for_mode(Mode mode) const;
};

// Throws std::invalid_argument above kMaxExhaustiveVertices vertices.
ExhaustiveOptima exhaustive_optima(const Graph& graph);

inline Answer exhaustive_optimum(const Graph& graph, Mode mode) {
  return exhaustive_optima(graph).for_mode(mode);
}

}  // namespace yoke::oracle
