#include "yoke/util/flat_map.h"

#include <gtest/gtest.h>

#include <cstdint>
#include <limits>
#include <unordered_map>
#include <vector>

#include "tools/graphgen/rng.h"

namespace yoke {
namespace {

TEST(FlatMap, EmptyFindsNothing) {
  FlatMap map;
  EXPECT_EQ(map.find(0), FlatMap::kAbsent);
  map.erase(7);  // erasing an absent key is harmless
  EXPECT_EQ(map.size(), 0u);
}

TEST(FlatMap, ExtremeKeys) {
  FlatMap map;
  const std::uint64_t top = std::numeric_limits<std::uint64_t>::max();
  map.insert(0, 1);
  map.insert(top, 2);
  map.insert(top - 1, 3);
  EXPECT_EQ(map.find(0), 1u);
  EXPECT_EQ(map.find(top), 2u);
  EXPECT_EQ(map.find(top - 1), 3u);
  map.erase(top);
  EXPECT_EQ(map.find(top), FlatMap::kAbsent);
  EXPECT_EQ(map.find(top - 1), 3u);
}

// Random inserts and erases against std::unordered_map (the reference), through many growths
// and long probe runs (keys from a small range collide often after masking).
TEST(FlatMap, AgreesWithStdUnorderedMap) {
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    gen::Rng rng(seed);
    FlatMap map;
    std::unordered_map<std::uint64_t, std::uint32_t> reference;
    std::vector<std::uint64_t> keys;
    const std::uint64_t range = seed % 2 == 0 ? 5000 : std::numeric_limits<std::uint64_t>::max();
    for (int step = 0; step < 20000; ++step) {
      if (keys.empty() || rng.below(3) != 0) {
        const std::uint64_t key = rng.below(range);
        if (reference.count(key) != 0) continue;
        const auto value = static_cast<std::uint32_t>(rng.below(1u << 30));
        map.insert(key, value);
        reference.emplace(key, value);
        keys.push_back(key);
      } else {
        const std::size_t at = rng.below(keys.size());
        map.erase(keys[at]);
        reference.erase(keys[at]);
        keys[at] = keys.back();
        keys.pop_back();
      }
      ASSERT_EQ(map.size(), reference.size());
      if (step % 97 == 0) {
        for (const auto& [key, value] : reference) ASSERT_EQ(map.find(key), value) << key;
        const std::uint64_t probe = rng.below(range);
        const auto it = reference.find(probe);
        ASSERT_EQ(map.find(probe), it == reference.end() ? FlatMap::kAbsent : it->second);
      }
    }
  }
}

}  // namespace
}  // namespace yoke
