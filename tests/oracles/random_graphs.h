// The tests' own seeded random graphs, independent of tools/graphgen: any vertex count, weight
// range (zero, negative, all equal), density and number of isolated vertices.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "yoke/graph.h"

namespace yoke::oracle {

struct RandomGraphSpec {
  std::size_t vertices = 0;
  double edge_probability = 0.5;  // for each pair of non-isolated vertices
  Weight min_w = 1;
  Weight max_w = 10;
  std::size_t isolated = 0;  // vertices, chosen at random, that get no edge

  std::string describe() const;  // for test labels
};

// Deterministic in (spec, seed); edges come in a shuffled order.
Graph random_graph(const RandomGraphSpec& spec, std::uint64_t seed);

// The small families swept against exhaustive enumeration: every vertex count 1..max_vertices,
// sparse to complete, weights mixed-sign, all zero, all equal, all negative, near-ties and wide,
// with and without isolated vertices.
std::vector<RandomGraphSpec> small_random_specs(std::size_t max_vertices);

// Vertices of b shifted past those of a; the edges of both.
Graph disjoint_union(const Graph& a, const Graph& b);

}  // namespace yoke::oracle
