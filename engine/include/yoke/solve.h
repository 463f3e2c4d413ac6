// Static maximum-weight matching on a general graph: Edmonds' primal-dual blossom method.
//
// solve() starts from a greedy dual and matching and runs one alternating-tree search per
// vertex that breaks the optimality conditions; each search costs O(region log region) in the
// size of the region it explores (lazy duals, search stamps, priority queues keyed by slack).
// Results are deterministic: the same graph (same edge order) gives the same matching.
#pragma once

#include <cstdint>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/graph.h"
#include "yoke/types.h"

namespace yoke {

struct SolveStats {
  std::uint64_t warm_start_searches = 0;  // trees grown by the fractional warm start
  std::uint64_t warm_start_scans = 0;
  std::uint64_t warm_start_pushes = 0;
  std::uint64_t searches = 0;             // trees grown by the exact search
  std::uint64_t augmentations = 0;
  std::uint64_t blossoms_formed = 0;
  std::uint64_t blossoms_expanded = 0;
  std::uint64_t dual_steps = 0;
  std::uint64_t scans = 0;           // even vertices whose edges were scanned
  std::uint64_t heap_pushes = 0;     // bound candidates queued
  std::uint64_t stale_bounds = 0;    // bounds taken from the queue and dropped as out of date
  std::uint64_t last_level_scans = 0;  // scans after each run's last dual step (a lone tree's
                                       // last level: the flood before what ends it)
};

enum class SolveStatus {
  optimal,              // the matching is optimal for the mode
  no_perfect_matching,  // perfect mode only: the graph has none; `mate` holds a maximum-
                        // cardinality matching of maximum weight as evidence of the shortfall
};

struct SolveResult {
  SolveStatus status = SolveStatus::optimal;
  Weight weight = 0;       // sum of the original weights of the matched edges
  std::size_t pairs = 0;   // number of matched edges
  std::vector<Vertex> mate;
  Certificate certificate;
  SolveStats stats;
};

// Throws InputError when a weight (after the mode's transformation) exceeds kMaxAbsWeight or
// the total weight bound kMaxTotalWeight; the message names the bound that was hit.
SolveResult solve(const Graph& graph, Mode mode);

struct MatchingState;
// The pipeline of solve() on a given state: greedy duals and matching, the fractional warm
// start, then the exact search. Precondition: `state` is fresh (every vertex exposed with dual
// 0, no blossoms) and sized for `graph`. Used by solve() and by a pool's first commit.
SolveStats solve_from_scratch(const Graph& graph, Weight weight_offset, MatchingState& state);

// The weight offset the mode adds to every edge (0 for max-weight). Throws InputError as
// solve() does.
Weight mode_weight_offset(const Graph& graph, Mode mode);

}  // namespace yoke
