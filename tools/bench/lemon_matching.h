// LEMON's MaxWeightedMatching behind a plain interface. LEMON 1.3.1 calls std::allocator
// members that C++20 removed, so lemon_matching.cpp is compiled as C++17: this header must
// stay C++17-clean (no engine headers, which use C++20).
#pragma once

#include <cstddef>
#include <cstdint>

namespace yoke::bench {

struct LemonEdge {
  std::uint32_t a;
  std::uint32_t b;
  std::int64_t w;
};

struct LemonOutcome {
  double run_ms = 0;           // mwm.run() only, wall clock
  double run_cpu_ms = 0;       // the same, this thread's CPU time
  std::size_t peak_bytes = 0;  // ListGraph + weight map + MaxWeightedMatching, heap peak
  long long weight = 0;        // LEMON's matchingWeight()
  std::size_t pairs = 0;       // LEMON's matchingSize()
};

// Builds a lemon::ListGraph with vertices 0..vertex_count-1 and `edges` in the given order, and
// its weight map, inside one heap window (see heap_counter.h); times the run() call only.
LemonOutcome lemon_max_weight_matching(std::size_t vertex_count, const LemonEdge* edges,
                                       std::size_t edge_count);

// "1.3.1": the LEMON the benchmark was compiled against.
const char* lemon_version();

}  // namespace yoke::bench
