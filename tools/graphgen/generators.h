// Seeded generators for the graph families yoke is tested and measured on (docs/contracts.md §6).
// Every generator is deterministic in its arguments and returns edges with no self loops and no
// duplicates. Scenarios are set in Vardolune, an invented harbour city
// (vardolune.h).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "yoke/graph.h"

namespace yoke::gen {

struct GeneratedGraph {
  std::string family;
  std::size_t vertex_count = 0;
  std::vector<Edge> edges;

  Graph to_graph() const { return Graph::from_edges(vertex_count, edges); }
};

// Points scattered over the districts of Vardolune (dense centre, sparser suburbs); each
// point linked to its ~`neighbours` nearest others; weight = value - distance cost (may be <= 0).
GeneratedGraph city(std::size_t vertex_count, int neighbours, std::uint64_t seed);

// Erdos-Renyi-like: `edge_count` distinct random pairs, weights uniform in [min_w, max_w].
GeneratedGraph sparse_random(std::size_t vertex_count, std::size_t edge_count, Weight min_w,
                             Weight max_w, std::uint64_t seed);

// Couriers 0..couriers-1 and orders couriers..couriers+orders-1; each order linked to
// ~`per_order` nearby couriers; weight = order value - pickup distance cost.
GeneratedGraph dispatch_bipartite(std::size_t couriers, std::size_t orders, int per_order,
                                  std::uint64_t seed);

// Complete graph, weights uniform in [min_w, max_w].
GeneratedGraph complete(std::size_t vertex_count, Weight min_w, Weight max_w, std::uint64_t seed);

// Shapes that force blossoms inside blossoms, T-blossom expansion, ties, zero and negative
// weights: chains of odd cycles, nested triangles, pendant paths on odd cycles.
GeneratedGraph blossom_stress(std::size_t vertex_count, std::uint64_t seed);

}  // namespace yoke::gen
