#include "yoke/solve.h"

#include <algorithm>
#include <string>

#include "solver/alternating_search.h"
#include "solver/greedy_start.h"
#include "solver/matching_state.h"
#include "yoke/util/dcheck.h"

namespace yoke {
namespace {

void check_bounds(Int128 largest_abs, Int128 pairs_bound, const char* what) {
  if (largest_abs > kMaxAbsWeight) {
    throw InputError(std::string(what) + " " + int128_text(largest_abs) +
                     " exceeds the bound |w| <= 2^52 = " + std::to_string(kMaxAbsWeight));
  }
  if (largest_abs * pairs_bound > kMaxTotalWeight) {
    throw InputError("pairs x largest |" + std::string(what) + "| = " +
                     int128_text(largest_abs * pairs_bound) +
                     " exceeds the total-weight bound 2^61 = " + std::to_string(kMaxTotalWeight));
  }
}

Certificate make_certificate(const MatchingState& state, Mode mode, Weight weight_offset) {
  Certificate cert;
  cert.mode = mode;
  cert.weight_offset = weight_offset;
  cert.mate = state.mate.values();
  cert.vertex_dual2 = state.dual2;
  cert.blossoms = state.forest.certificate_blossoms({}, state.mate.size());
  return cert;
}

}  // namespace

Weight mode_weight_offset(const Graph& graph, Mode mode) {
  if (graph.vertex_count() >= kMaxVertices || graph.edge_count() >= kMaxEdges) {
    throw InputError("the graph has " + std::to_string(graph.vertex_count()) + " vertices and " +
                     std::to_string(graph.edge_count()) + " edges; each must stay below 2^30");
  }
  if (graph.edge_count() == 0) return 0;
  Weight min_w = graph.edge(0).w, max_w = graph.edge(0).w;
  for (const Edge& e : graph.edges()) {
    min_w = std::min(min_w, e.w);
    max_w = std::max(max_w, e.w);
  }
  const Int128 pairs_bound = std::min<Int128>(graph.vertex_count() / 2, graph.edge_count());
  const Int128 largest_abs = std::max<Int128>(-Int128{min_w}, Int128{max_w});
  if (mode == Mode::max_weight) {
    check_bounds(largest_abs, pairs_bound, "weight");
    return 0;
  }
  // A raw weight past the bound is named as such before the offset is even computed.
  if (largest_abs > kMaxAbsWeight) check_bounds(largest_abs, pairs_bound, "weight");
  // Every extra pair must outweigh any weight difference between matchings of consecutive
  // sizes, and every shifted weight must be positive.
  const Int128 offset = pairs_bound * (Int128{max_w} - min_w) + std::max<Int128>(0, -Int128{min_w}) + 1;
  check_bounds(offset + max_w, pairs_bound, "weight after the cardinality offset");
  return static_cast<Weight>(offset);
}

SolveStats solve_from_scratch(const Graph& graph, Weight offset, MatchingState& state) {
  const std::size_t n = graph.vertex_count();
  YOKE_DCHECK(state.mate.size() == n && state.dual2.size() == n &&
                  std::all_of(state.mate.values().begin(), state.mate.values().end(),
                              [](Vertex m) { return m == kNoVertex; }) &&
                  std::all_of(state.dual2.begin(), state.dual2.end(),
                              [](Weight d) { return d == 0; }) &&
                  state.forest.live_blossoms().empty(),
              "solve_from_scratch: the state is not fresh (a mate, a dual or a blossom is set) "
              "or not sized for the graph");
  greedy_start(graph, offset, state);

  // Both phases start a tree at every exposed vertex with a positive dual. All roots share one
  // parity, so the half-slack of an edge between two trees is integral; raising an exposed
  // vertex's dual keeps every slack >= 0.
  auto add_roots = [&](AlternatingSearch& search) {
    for (Vertex v = 0; v < n; ++v) {
      if (state.mate[v] != kNoVertex || state.dual2[v] == 0) continue;
      state.dual2[v] += state.dual2[v] % 2;
      search.add_root(v);
    }
  };
  SolveStats warm;
  {
    AlternatingSearch fractional(graph, offset, state, /*half_cycles=*/true);
    add_roots(fractional);
    fractional.run();
    fractional.settle_half_cycles();
    warm = fractional.stats();
  }
  AlternatingSearch search(graph, offset, state);
  add_roots(search);
  search.run();
  SolveStats stats = search.stats();
  stats.warm_start_searches = warm.searches;
  stats.warm_start_scans = warm.scans;
  stats.warm_start_pushes = warm.heap_pushes;
  return stats;
}

SolveResult solve(const Graph& graph, Mode mode) {
  const Weight offset = mode_weight_offset(graph, mode);
  const std::size_t n = graph.vertex_count();
  MatchingState state(n);
  SolveResult result;
  result.stats = solve_from_scratch(graph, offset, state);
  result.mate = state.mate.values();
  for (Vertex v = 0; v < n; ++v) {
    const Vertex m = state.mate[v];
    if (m == kNoVertex || m < v) continue;
    ++result.pairs;
    for (const Incidence& inc : graph.incident(v)) {
      if (inc.other == m) {
        result.weight += graph.edge(inc.edge).w;
        break;
      }
    }
  }
  if (mode == Mode::perfect && 2 * result.pairs != n) {
    // No perfect matching: the certificate proves the matching has the most pairs possible.
    result.status = SolveStatus::no_perfect_matching;
    result.certificate = make_certificate(state, Mode::max_cardinality, offset);
  } else if (mode == Mode::perfect) {
    // Perfect-matching duals for the original weights: shift each u by offset/2 (doubled: offset).
    for (Weight& d : state.dual2) d -= offset;
    result.certificate = make_certificate(state, mode, 0);
  } else {
    result.certificate = make_certificate(state, mode, offset);
  }
  return result;
}

}  // namespace yoke
