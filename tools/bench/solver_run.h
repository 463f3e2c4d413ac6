// What one timed solver run on one graph measured.
#pragma once

#include <cstddef>
#include <string>

#include "yoke/types.h"

namespace yoke::bench {

struct SolverRun {
  double solve_ms = 0;         // the solve call only, wall clock; graph construction excluded
  double solve_cpu_ms = 0;     // the same call, this thread's CPU time
  std::size_t peak_bytes = 0;  // peak live heap of graph representation + solver
  Weight weight = 0;           // total weight of the matching the solver returned
  std::size_t pairs = 0;
  // Checks done after the timed window (yoke only): the mate array is a matching of the graph
  // with the weight reported, and the certificate holds.
  bool checked = false;
  bool valid = true;
  std::string failure;  // the first failed check, in words
};

}  // namespace yoke::bench
