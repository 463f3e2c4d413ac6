// The warm start of a static solve: feasible doubled duals and a greedy matching on tight edges.
#pragma once

#include "solver/matching_state.h"
#include "yoke/graph.h"

namespace yoke {

// Sets 2u(v) = the largest positive weight at v (every edge then has slack >= 0), then, vertex
// by vertex, lowers an exposed vertex's dual as far as feasibility allows and matches it along
// a tight edge to an exposed neighbour when there is one. O(m).
void greedy_start(const Graph& graph, Weight weight_offset, MatchingState& state);

}  // namespace yoke
