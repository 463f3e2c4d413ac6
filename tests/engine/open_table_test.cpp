#include "yoke/util/open_table.h"

#include <gtest/gtest.h>

#include <cstdint>
#include <map>
#include <vector>

#include "tools/graphgen/rng.h"

namespace yoke {
namespace {

// A key of two fields with a hash that sends every key to one of four values: long probe
// runs, so erase's backward shift is exercised across runs that meet and wrap around.
struct PairKey {
  std::uint64_t low = 0, high = 0;
  bool operator==(const PairKey&) const = default;
  bool operator<(const PairKey& other) const {
    return low != other.low ? low < other.low : high < other.high;
  }
};
struct CrowdingHash {
  std::uint64_t operator()(const PairKey& key) const { return (key.low + key.high) % 4; }
};

TEST(OpenTable, TryEmplaceKeepsAnExistingValue) {
  OpenTable<PairKey, int, CrowdingHash> table;
  const auto [first, inserted] = table.try_emplace({1, 2}, 10);
  EXPECT_TRUE(inserted);
  EXPECT_EQ(*first, 10);
  const auto [again, inserted_again] = table.try_emplace({1, 2}, 20);
  EXPECT_FALSE(inserted_again);
  EXPECT_EQ(*again, 10);
  *again = 30;
  ASSERT_NE(table.find({1, 2}), nullptr);
  EXPECT_EQ(*table.find({1, 2}), 30);
  EXPECT_EQ(table.find({2, 1}), nullptr);
  EXPECT_EQ(table.size(), 1u);
  table.insert_or_assign({1, 2}, 40);  // present: replaced
  table.insert_or_assign({2, 1}, 50);  // absent: added
  EXPECT_EQ(*table.find({1, 2}), 40);
  EXPECT_EQ(*table.find({2, 1}), 50);
  EXPECT_EQ(table.size(), 2u);
}

TEST(OpenTable, ClearEmptiesAndTheTableFillsAgain) {
  OpenTable<std::uint64_t, std::uint32_t> table;
  for (std::uint64_t key = 0; key < 100000; ++key) table.insert_new(key, 1);
  for (std::uint64_t key = 0; key < 99990; ++key) table.erase(key);
  table.clear();  // far more cells than keys: they are given back
  EXPECT_EQ(table.size(), 0u);
  EXPECT_EQ(table.find(99995), nullptr);
  for (std::uint64_t key = 0; key < 10; ++key) table.try_emplace(key, 2);
  table.clear();  // few cells: kept, emptied
  EXPECT_EQ(table.find(3), nullptr);
  table.try_emplace(3, 4);
  EXPECT_EQ(*table.find(3), 4u);
}

// Random try_emplace, insert_new, erase, clear against std::map (the reference).
TEST(OpenTable, AgreesWithStdMapUnderCrowdedHashes) {
  for (std::uint64_t seed = 1; seed <= 10; ++seed) {
    gen::Rng rng(seed);
    OpenTable<PairKey, std::uint32_t, CrowdingHash> table;
    std::map<PairKey, std::uint32_t> reference;
    for (int step = 0; step < 6000; ++step) {
      const PairKey key{rng.below(40), rng.below(40)};
      const auto value = static_cast<std::uint32_t>(rng.below(1000));
      switch (rng.below(10)) {
        case 0:
          table.erase(key);
          reference.erase(key);
          break;
        case 1:
          if (!reference.contains(key)) {
            table.insert_new(key, value);
            reference.emplace(key, value);
          }
          break;
        case 2:
          if (rng.below(50) == 0) {
            table.clear();
            reference.clear();
          }
          break;
        default: {
          const bool fresh = !reference.contains(key);
          const auto [stored, inserted] = table.try_emplace(key, value);
          ASSERT_EQ(inserted, fresh);
          reference.try_emplace(key, value);
          ASSERT_EQ(*stored, reference.at(key));
        }
      }
      ASSERT_EQ(table.size(), reference.size());
      if (step % 31 == 0) {
        for (const auto& [k, v] : reference) {
          ASSERT_NE(table.find(k), nullptr);
          ASSERT_EQ(*table.find(k), v);
        }
        const PairKey probe{rng.below(40), rng.below(40)};
        ASSERT_EQ(table.find(probe) != nullptr, reference.contains(probe));
      }
    }
  }
}

}  // namespace
}  // namespace yoke
