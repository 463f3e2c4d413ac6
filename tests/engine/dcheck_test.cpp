// YOKE_DCHECK (engine/include/yoke/util/dcheck.h): checked in the sanitizer and Debug builds,
// where a broken precondition aborts with its message, and never evaluated in Release.
#include <gtest/gtest.h>

#include "yoke/graph.h"
#include "yoke/util/dcheck.h"

namespace yoke {
namespace {

TEST(Dcheck, EvaluatesItsConditionOnlyWhenChecksAreOn) {
  int evaluated = 0;
  YOKE_DCHECK(++evaluated > 0, "counts its evaluations");
#if defined(YOKE_DCHECKS) && YOKE_DCHECKS
  EXPECT_EQ(evaluated, 1);
#else
  EXPECT_EQ(evaluated, 0);
#endif
}

#if defined(YOKE_DCHECKS) && YOKE_DCHECKS
TEST(DcheckDeathTest, ABrokenPreconditionAbortsWithItsMessage) {
  Graph graph(2);
  EXPECT_DEATH(graph.add_edge(1, 2, 5), "YOKE_DCHECK.*Graph::add_edge: a missing end");
}

TEST(DcheckDeathTest, FromEdgesRefusesTwoEdgesWithTheSameEnds) {
  EXPECT_DEATH(Graph::from_edges(3, {{0, 1, 4}, {2, 0, 1}, {1, 0, 7}}),
               "YOKE_DCHECK.*Graph::from_edges: two edges join the same ends");
}
#endif

}  // namespace
}  // namespace yoke
