// The test oracle for tiny graphs: the optimum of each mode by enumerating every matching.
// Exponential; meant for graphs of up to about 12 vertices.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <vector>

#include "yoke/graph.h"
#include "yoke/types.h"

namespace yoke::cli::testing {

struct Optimum {
  std::size_t pairs = 0;
  std::int64_t weight = 0;
};

// The best (pairs, weight) of `mode`: max-weight maximises weight (pairs: of one optimal
// matching, not unique under ties); max-cardinality maximises pairs, then weight; perfect
// maximises weight over perfect matchings and returns nullopt if there is none.
std::optional<Optimum> exhaustive_optimum(std::size_t vertex_count,
                                          const std::vector<Edge>& edges, Mode mode);

}  // namespace yoke::cli::testing
