// Graph facts with a textbook proof ("common knowledge"): the expected optimum is known in
// closed form, so no oracle program is involved.
#include <gtest/gtest.h>

#include "checked_solve.h"
#include "random_graphs.h"
#include "shapes.h"
#include "tests/oracles/all_modes.h"

namespace yoke::oracle {
namespace {


// An oracle that knows the answer: `pairs` pairs of total `weight`, perfect iff 2 pairs == n.
Oracle known(std::size_t pairs, Weight weight) {
  return [pairs, weight](const Graph& graph, Mode mode) {
    const bool perfect = 2 * pairs == graph.vertex_count();
    if (mode == Mode::perfect && !perfect) return Answer{.feasible = false};
    return Answer{true, weight, pairs};
  };
}

// The no-perfect-matching evidence is a maximum-cardinality matching; with unit weights its
// weight is its size, so known() also answers the fallback question.

// common knowledge: K_n with unit weights has floor(n/2) pairs; a perfect matching iff n even.
TEST(CommonKnowledge, CompleteGraphHasFloorHalfPairs) {
  for (std::size_t n = 1; n <= 40; ++n) {
    for (Mode mode : kAllModes) {
      expect_optimal(complete_graph(n, 1), mode, known(n / 2, static_cast<Weight>(n / 2)),
                     "common_knowledge_K" + std::to_string(n));
    }
  }
}

// common knowledge: an odd cycle C_n has (n-1)/2 pairs, weight (n-1)/2 with unit weights, and
// no perfect matching; an even cycle has n/2 pairs and a perfect matching.
TEST(CommonKnowledge, CycleHasFloorHalfPairs) {
  for (std::size_t n = 3; n <= 301; n += n < 40 ? 1 : 38) {
    for (Mode mode : kAllModes) {
      expect_optimal(cycle_graph(n, 1), mode, known(n / 2, static_cast<Weight>(n / 2)),
                     "common_knowledge_C" + std::to_string(n));
    }
  }
}

// common knowledge: a long odd cycle, (n-1)/2 pairs. One huge blossom if a solver shrinks it.
TEST(CommonKnowledge, LongOddCycle) {
  const std::size_t n = 100001;
  for (Mode mode : {Mode::max_weight, Mode::max_cardinality}) {
    expect_optimal(cycle_graph(n, 3), mode, known(n / 2, static_cast<Weight>(3 * (n / 2))),
                   "common_knowledge_C100001_w3");
  }
}

// common knowledge (Petersen's theorem: a bridgeless cubic graph has a perfect matching): the
// Petersen graph has one of 5 pairs, whatever the weights.
TEST(CommonKnowledge, PetersenGraphHasPerfectMatching) {
  expect_optimal(petersen_graph(1), Mode::perfect, known(5, 5), "common_knowledge_petersen");
  expect_optimal(petersen_graph(1), Mode::max_cardinality, known(5, 5),
                 "common_knowledge_petersen");
  for (Weight w : {Weight{-7}, Weight{0}, Weight{13}}) {
    expect_optimal(petersen_graph(w), Mode::perfect, known(5, 5 * w),
                   "common_knowledge_petersen_w" + std::to_string(w));
  }
}

// common knowledge: every edge of a star shares the centre, so one pair, the heaviest edge.
TEST(CommonKnowledge, StarHasOnePair) {
  for (std::size_t leaves = 1; leaves <= 50; ++leaves) {
    std::vector<Weight> weights;
    for (std::size_t i = 0; i < leaves; ++i) weights.push_back(static_cast<Weight>(i * 7 % 23) + 1);
    const Weight best = *std::max_element(weights.begin(), weights.end());
    for (Mode mode : kAllModes) {
      // The fallback of perfect mode is also one pair of the heaviest edge.
      expect_optimal(star_graph(weights), mode, known(1, best),
                     "common_knowledge_star" + std::to_string(leaves));
    }
  }
}

// common knowledge: a path on n vertices has floor(n/2) pairs; a perfect matching iff n even.
TEST(CommonKnowledge, PathHasFloorHalfPairs) {
  for (std::size_t n = 1; n <= 60; ++n) {
    for (Mode mode : kAllModes) {
      expect_optimal(path_graph(n, 1), mode, known(n / 2, static_cast<Weight>(n / 2)),
                     "common_knowledge_P" + std::to_string(n));
    }
  }
}

// common knowledge (Koenig/Hall): K_{n,n} has a perfect matching; K_{a,b} has min(a,b) pairs.
TEST(CommonKnowledge, CompleteBipartiteHasMinSidePairs) {
  for (std::size_t a = 1; a <= 12; ++a) {
    for (std::size_t b = a; b <= 12; b += 3) {
      for (Mode mode : kAllModes) {
        expect_optimal(complete_bipartite(a, b, 2), mode, known(a, static_cast<Weight>(2 * a)),
                       "common_knowledge_K" + std::to_string(a) + "_" + std::to_string(b));
      }
    }
  }
}

// common knowledge: a matching of a disjoint union is a matching of each part, so the optimum
// of the union is the sum of the parts' optima (and a perfect one exists iff both have one).
TEST(CommonKnowledge, DisjointUnionAddsOptima) {
  for (std::uint64_t seed = 0; seed < 40; ++seed) {
    const Graph a = random_graph({20 + seed % 9, 0.2, -5, 30, seed % 3}, seed);
    const Graph b = random_graph({15 + seed % 6, 0.3, 1, 4, 0}, seed + 100);
    const Graph both = disjoint_union(a, b);
    for (Mode mode : kAllModes) {
      SolveResult ra, rb, rboth;
      ASSERT_TRUE(solve_checked(a, mode, ra));
      ASSERT_TRUE(solve_checked(b, mode, rb));
      ASSERT_TRUE(solve_checked(both, mode, rboth));
      const std::string label = "common_knowledge_union_seed" + std::to_string(seed);
      EXPECT_EQ(rboth.weight, ra.weight + rb.weight) << label << " " << mode_name(mode);
      if (mode != Mode::max_weight) {
        EXPECT_EQ(rboth.pairs, ra.pairs + rb.pairs) << label << " " << mode_name(mode);
      }
      if (mode == Mode::perfect) {
        const bool parts = ra.status == SolveStatus::optimal && rb.status == SolveStatus::optimal;
        EXPECT_EQ(rboth.status == SolveStatus::optimal, parts) << label;
      }
    }
  }
}

// common knowledge: with all weights <= 0 the empty matching is optimal in max-weight mode.
TEST(CommonKnowledge, NonPositiveWeightsGiveWeightZero) {
  for (std::uint64_t seed = 0; seed < 30; ++seed) {
    const Graph graph = random_graph({30, 0.3, -9, 0, 2}, seed);
    expect_optimal(graph, Mode::max_weight, known(0, 0),
                   "common_knowledge_nonpositive_seed" + std::to_string(seed));
  }
}

}  // namespace
}  // namespace yoke::oracle
