// What a solved pool keeps between searches: the matching, the doubled vertex duals and the
// blossom forest with its doubled blossom duals. Together they satisfy the optimality
// conditions of docs/mathematics.md §2 except at the vertices a repair has queued.
#pragma once

#include <vector>

#include "solver/blossom_forest.h"
#include "solver/mates.h"
#include "yoke/types.h"

namespace yoke {

struct MatchingState {
  explicit MatchingState(std::size_t vertex_count = 0)
      : mate(vertex_count), dual2(vertex_count, 0), forest(vertex_count) {}

  Mates mate;                 // kNoVertex when exposed
  std::vector<Weight> dual2;  // 2 u(v)
  BlossomForest forest;
};

}  // namespace yoke
