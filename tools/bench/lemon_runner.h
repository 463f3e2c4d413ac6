// Runs LEMON's MaxWeightedMatching (the reference) on a generated graph and measures it.
#pragma once

#include "tools/bench/solver_run.h"
#include "tools/graphgen/generators.h"

namespace yoke::bench {

// Same vertices, same edge order as the generated graph; see lemon_max_weight_matching().
SolverRun run_lemon(const gen::GeneratedGraph& input);

}  // namespace yoke::bench
