// The classes of a graph's vertices by its maximum matchings (the Gallai-Edmonds
// decomposition, docs/mathematics.md §9), found from one maximum matching, and the class dual:
// the unit-weight prices that certify that the matching has the most pairs.
//
// These are the building blocks of a max-cardinality repair that keeps the cardinality part of
// the duals apart from the weights' part (docs/mathematics.md §9, "design, not built yet").
// Nothing in the pool calls them yet.
#pragma once

#include <cstdint>
#include <span>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/graph.h"
#include "yoke/types.h"

namespace yoke {

enum class MatchClass : std::uint8_t {
  missable,    // D: some maximum matching leaves it exposed
  neighbour,   // A: not in D, next to D; matched into D by every maximum matching
  always_paired,  // C: the rest; matched inside C by every maximum matching
};

struct CardinalityClasses {
  // False when `mate` is not a maximum matching (an augmenting path was found); the other
  // fields are then empty.
  bool maximum = false;
  std::vector<MatchClass> of;               // per vertex
  std::vector<std::uint32_t> part;          // per vertex: its part of G[D], kNoPart outside D
  std::vector<std::vector<Vertex>> parts;   // the vertices of each part of G[D]
  static constexpr std::uint32_t kNoPart = UINT32_MAX;
};

// The classes of `graph` given a matching `mate` (kNoVertex: exposed; symmetric, on edges of
// the graph). Edmonds' alternating search from every exposed vertex at once, with blossoms
// contracted by union-find: D are the even vertices, A the odd ones, C the unreached; the parts
// are the connected parts of G[D]. Cost O((n + m) α(n)); no recursion.
CardinalityClasses cardinality_classes(const Graph& graph, std::span<const Vertex> mate);

// The class dual for unit weights, doubled: 2u = 2 on A, 1 on C, 0 on D; a blossom with 2z = 2
// for every part of G[D] with at least 3 vertices (its children are its vertices, its base the
// one vertex not matched inside it). With the matching the classes came from, a certificate of
// the most pairs (docs/mathematics.md §9). Precondition: classes.maximum. O(n).
struct ClassDual {
  std::vector<Weight> vertex_dual2;
  std::vector<CertificateBlossom> blossoms;
};
ClassDual class_dual(const CardinalityClasses& classes, std::span<const Vertex> mate);

}  // namespace yoke
