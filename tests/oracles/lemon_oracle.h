// LEMON 1.3.1 (Debian liblemon-dev) as an independent oracle. Each call copies the graph into
// its own lemon::ListGraph; nothing is shared with yoke's engine.
#pragma once

#include <cstddef>

#include "yoke/graph.h"
#include "oracle_answer.h"

namespace yoke::oracle {

// max-weight: lemon::MaxWeightedMatching; perfect: lemon::MaxWeightedPerfectMatching;
// max-cardinality: the size from lemon::MaxMatching, the weight from MaxWeightedMatching on
// weights raised by a constant large enough that one more pair always wins (the two LEMON
// sizes must agree, or this throws std::logic_error). Every LEMON matching is re-summed here.
Answer lemon_optimum(const Graph& graph, Mode mode);

// lemon::MaxMatching: the size of a maximum-cardinality matching.
std::size_t lemon_max_cardinality(const Graph& graph);

}  // namespace yoke::oracle
