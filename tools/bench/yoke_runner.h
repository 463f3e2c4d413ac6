// Runs yoke::solve (max-weight mode) on a generated graph and measures it.
#pragma once

#include "tools/bench/solver_run.h"
#include "tools/graphgen/generators.h"

namespace yoke::bench {

// Builds yoke's graph and solves inside one heap window; times the solve call only. Then, not
// timed: re-sums the matching from the mate array and checks the certificate.
SolverRun run_yoke(const gen::GeneratedGraph& input);

}  // namespace yoke::bench
