// LEMON's MaxWeightedMatching (the reference) on yoke's graphs: a measured run on a generated
// graph, and the edge copy every run starts from.
#pragma once

#include <vector>

#include "tools/bench/lemon_matching.h"
#include "tools/bench/solver_run.h"
#include "tools/graphgen/generators.h"

namespace yoke::bench {

// Same vertices, same edge order as the generated graph; see lemon_max_weight_matching().
SolverRun run_lemon(const gen::GeneratedGraph& input);

// yoke's edges as LEMON's wrapper takes them, in the same order (LEMON's answer and time may
// depend on it). The copy stands for the input: make it before LEMON's heap window opens.
std::vector<LemonEdge> lemon_edges(const std::vector<Edge>& edges);

}  // namespace yoke::bench
