// The checks used by every oracle suite must be able to fail: tampered results are rejected.
#include <gtest/gtest.h>

#include "checked_solve.h"
#include "exhaustive.h"
#include "shapes.h"

namespace yoke::oracle {
namespace {

// oracle: exhaustive enumeration (the reference for same_optimum below).
TEST(OracleHarness, RejectsTamperedResults) {
  // A 6-cycle with one heavy chord: the optimum {1-4, 2-3, 5-0} (weight 17) is unique.
  const Graph graph = Graph::from_edges(
      6, {{0, 1, 5}, {1, 2, 1}, {2, 3, 5}, {3, 4, 1}, {4, 5, 5}, {5, 0, 1}, {1, 4, 11}});
  const Oracle enumeration = [](const Graph& g, Mode m) { return exhaustive_optimum(g, m); };
  SolveResult good;
  ASSERT_TRUE(solve_checked(graph, Mode::max_weight, good));
  ASSERT_TRUE(same_optimum(graph, Mode::max_weight, good, enumeration));
  ASSERT_EQ(good.weight, 17);

  SolveResult wrong_weight = good;
  wrong_weight.weight += 1;
  EXPECT_FALSE(result_is_sound(graph, Mode::max_weight, wrong_weight));
  EXPECT_FALSE(same_optimum(graph, Mode::max_weight, wrong_weight, enumeration));

  SolveResult asymmetric = good;
  asymmetric.mate[asymmetric.mate[0]] = kNoVertex;
  EXPECT_FALSE(result_is_sound(graph, Mode::max_weight, asymmetric));

  // 0-2 is not an edge.
  SolveResult non_edge = good;
  non_edge.mate.assign(6, kNoVertex);
  non_edge.mate[0] = 2;
  non_edge.mate[2] = 0;
  non_edge.pairs = 1;
  non_edge.weight = 0;
  EXPECT_FALSE(result_is_sound(graph, Mode::max_weight, non_edge));

  // A consistent but suboptimal matching {0-1, 2-3, 4-5} (weight 15) with the optimum's duals.
  SolveResult suboptimal = good;
  suboptimal.mate = {1, 0, 3, 2, 5, 4};
  suboptimal.pairs = 3;
  suboptimal.weight = 15;
  suboptimal.certificate.mate = suboptimal.mate;
  EXPECT_TRUE(result_is_sound(graph, Mode::max_weight, suboptimal));
  EXPECT_FALSE(same_optimum(graph, Mode::max_weight, suboptimal, enumeration));
  EXPECT_FALSE(certificate_holds(graph, suboptimal));

  // A certificate that does not describe the returned matching.
  SolveResult mismatched = good;
  mismatched.certificate.mate.assign(6, kNoVertex);
  EXPECT_FALSE(certificate_holds(graph, mismatched));

  // Claiming no perfect matching where one exists.
  SolveResult perfect;
  ASSERT_TRUE(solve_checked(graph, Mode::perfect, perfect));
  perfect.status = SolveStatus::no_perfect_matching;
  EXPECT_FALSE(result_is_sound(graph, Mode::perfect, perfect));
}

}  // namespace
}  // namespace yoke::oracle
