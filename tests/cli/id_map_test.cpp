#include <gtest/gtest.h>

#include <cstdint>
#include <vector>

#include "tools/formats/id_map.h"

namespace yoke::formats {
namespace {

TEST(IdMap, NumbersIdsInOrderOfFirstAppearance) {
  IdMap ids;
  EXPECT_EQ(ids.intern(500), 0u);
  EXPECT_EQ(ids.intern(18446744073709551615ULL), 1u);
  EXPECT_EQ(ids.intern(500), 0u);
  EXPECT_EQ(ids.intern(0), 2u);
  EXPECT_EQ(ids.size(), 3u);
  EXPECT_EQ(ids.ids(), (std::vector<std::uint64_t>{500, 18446744073709551615ULL, 0}));
}

TEST(IdMap, FindDoesNotInsert) {
  IdMap ids;
  EXPECT_EQ(ids.find(7), kNoVertex);
  ids.intern(7);
  EXPECT_EQ(ids.find(7), 0u);
  EXPECT_EQ(ids.find(8), kNoVertex);
  EXPECT_EQ(ids.size(), 1u);
}

TEST(IdMap, KeepsEveryIdAcrossGrowth) {
  // Ids with equal low bits (multiples of 2^20) would all collide without the mixing hash.
  IdMap ids;
  constexpr std::uint64_t kCount = 100000;
  for (std::uint64_t i = 0; i < kCount; ++i) ASSERT_EQ(ids.intern(i << 20), i);
  for (std::uint64_t i = 0; i < kCount; ++i) ASSERT_EQ(ids.find(i << 20), i);
  EXPECT_EQ(ids.find(1), kNoVertex);
}

TEST(IdMap, MixesDirectAndHashedIdsInOneNumbering) {
  // Ids below 16 take the flat array, the others the hash table; the numbering is shared.
  IdMap ids(16);
  const std::vector<std::uint64_t> order = {3, 16, 15, 1000000, 0, 17, 3, 16};
  std::vector<Vertex> got;
  for (const std::uint64_t id : order) got.push_back(ids.intern(id));
  EXPECT_EQ(got, (std::vector<Vertex>{0, 1, 2, 3, 4, 5, 0, 1}));
  EXPECT_EQ(ids.find(15), 2u);
  EXPECT_EQ(ids.find(17), 5u);
  EXPECT_EQ(ids.find(14), kNoVertex);
  EXPECT_EQ(ids.find(18), kNoVertex);

  IdMap all_hashed(0);
  EXPECT_EQ(all_hashed.intern(0), 0u);
  EXPECT_EQ(all_hashed.find(0), 0u);
}

TEST(IdMap, RebuildsFromAnExistingNumbering) {
  const std::vector<std::uint64_t> numbering = {42, 7, 18446744073709551615ULL};
  const IdMap ids(numbering);
  EXPECT_EQ(ids.find(42), 0u);
  EXPECT_EQ(ids.find(7), 1u);
  EXPECT_EQ(ids.find(18446744073709551615ULL), 2u);
  EXPECT_EQ(ids.ids(), numbering);
}

}  // namespace
}  // namespace yoke::formats
