#include <gtest/gtest.h>

#include <vector>

#include "tools/formats/duplicate_edges.h"

namespace yoke::formats {
namespace {

TEST(DuplicateEdges, NoneInASimpleGraph) {
  const std::vector<Edge> edges = {{0, 1, 1}, {1, 2, 1}, {2, 0, 1}, {0, 3, 1}};
  EXPECT_FALSE(find_first_duplicate(4, edges).has_value());
  EXPECT_FALSE(find_first_duplicate(0, {}).has_value());
}

TEST(DuplicateEdges, FindsBothOrientations) {
  const std::vector<Edge> same = {{0, 1, 1}, {1, 2, 1}, {0, 1, 5}};
  const auto found = find_first_duplicate(3, same);
  ASSERT_TRUE(found.has_value());
  EXPECT_EQ(found->first, 0u);
  EXPECT_EQ(found->repeat, 2u);

  const std::vector<Edge> reversed = {{2, 1, 1}, {0, 1, 1}, {1, 2, 5}};
  const auto found_reversed = find_first_duplicate(3, reversed);
  ASSERT_TRUE(found_reversed.has_value());
  EXPECT_EQ(found_reversed->first, 0u);
  EXPECT_EQ(found_reversed->repeat, 2u);
}

TEST(DuplicateEdges, PicksTheEarliestRepeatAndItsFirstOccurrence) {
  // {0,1} at 0, 3, 5; {2,3} at 1, 2. The earliest repeat is index 2 (of index 1).
  const std::vector<Edge> edges = {{0, 1, 1}, {2, 3, 1}, {3, 2, 1},
                                   {1, 0, 1}, {4, 0, 1}, {0, 1, 1}};
  const auto found = find_first_duplicate(5, edges);
  ASSERT_TRUE(found.has_value());
  EXPECT_EQ(found->first, 1u);
  EXPECT_EQ(found->repeat, 2u);

  // Three occurrences: the second is the earliest repeat, reported against the first.
  const std::vector<Edge> triple = {{0, 1, 1}, {1, 0, 1}, {0, 1, 1}};
  const auto found_triple = find_first_duplicate(2, triple);
  ASSERT_TRUE(found_triple.has_value());
  EXPECT_EQ(found_triple->first, 0u);
  EXPECT_EQ(found_triple->repeat, 1u);
}

TEST(DuplicateEdges, SeparatesEdgesThatShareOnlyTheLargerEndpoint) {
  // {0,5} and {1,5} share 5; the marker left by bucket 0 must not count in bucket 1.
  const std::vector<Edge> edges = {{0, 5, 1}, {1, 5, 1}, {5, 2, 1}, {2, 1, 1}};
  EXPECT_FALSE(find_first_duplicate(6, edges).has_value());
}

}  // namespace
}  // namespace yoke::formats
