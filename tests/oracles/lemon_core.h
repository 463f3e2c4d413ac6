// The LEMON side of the LEMON oracle, behind a C++17 interface of plain edges (see
// lemon_core.cpp for why). Use lemon_oracle.h, which adapts yoke::Graph to this.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "oracle_answer.h"

namespace yoke::oracle {

struct PlainEdge {
  std::uint32_t a;
  std::uint32_t b;
  std::int64_t w;
};

struct PlainGraph {
  std::size_t vertex_count = 0;
  std::vector<PlainEdge> edges;
};

// As lemon_optimum / lemon_max_cardinality in lemon_oracle.h.
Answer lemon_optimum(const PlainGraph& graph, Mode mode);
std::size_t lemon_max_cardinality(const PlainGraph& graph);

}  // namespace yoke::oracle
