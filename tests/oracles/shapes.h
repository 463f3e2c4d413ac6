// Hand-built graphs with known structure: textbook shapes and blossom stress shapes.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "yoke/graph.h"

namespace yoke::oracle {

Graph complete_graph(std::size_t n, Weight w);
Graph cycle_graph(std::size_t n, Weight w);
Graph path_graph(std::size_t n, Weight w);
// Centre 0 and leaves 1..weights.size(); leaf i hangs on an edge of weight weights[i-1].
Graph star_graph(const std::vector<Weight>& weights);
// Outer 5-cycle 0..4, inner pentagram 5..9, spokes i - i+5; all weights w.
Graph petersen_graph(Weight w);
Graph complete_bipartite(std::size_t left, std::size_t right, Weight w);

// An odd cycle of `arms` copies of the depth-1 structure, depth times over (a single vertex at
// depth 0): arms^depth vertices. Edges of level d (d = 1 innermost) weigh
// base + (depth - d) * step, so inner cycles are heavier and shrink into blossoms first, and
// every outer blossom contains inner ones. Each copy links to the next from its last vertex to
// the next copy's first, so blossom bases differ between levels.
Graph nested_odd_cycles(std::size_t depth, std::size_t arms, Weight base, Weight step);

// `count` odd cycles of `length` in a row, cycle k joined to cycle k+1 by one edge; weights
// uniform in [min_w, max_w] from the seed.
Graph odd_cycle_chain(std::size_t count, std::size_t length, Weight min_w, Weight max_w,
                      std::uint64_t seed);

// The same edges with every weight replaced.
Graph with_weights(const Graph& graph, const std::vector<Weight>& weights);
Graph with_uniform_weight(const Graph& graph, Weight w);
// `extra` isolated vertices appended.
Graph with_isolated(const Graph& graph, std::size_t extra);
// Vertex `to` gets a path of `length` new vertices hanging from it.
Graph with_stem(const Graph& graph, Vertex to, std::size_t length, Weight w);

}  // namespace yoke::oracle
