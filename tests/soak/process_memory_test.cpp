// The memory soak's verdict (memory_trend) on made-up samples, and resident_kib on this very
// process.
#include <unistd.h>

#include <gtest/gtest.h>

#include "process_memory.h"

namespace yoke::soak {
namespace {

TEST(MemoryTrend, ComparesTheLastThirdAfterWarmUpWithTheFirst) {
  // Warm-up (the first 3 of 9) is ignored however high; then early {10, 12}, late {11, 12}.
  const std::vector<std::uint64_t> flat = {1, 50, 90, 10, 12, 11, 11, 11, 12};
  const MemoryTrend steady = memory_trend(flat, 0.34, 0.10);
  EXPECT_TRUE(steady.problem.empty());
  EXPECT_EQ(steady.early_kib, 12u);
  EXPECT_EQ(steady.late_kib, 12u);
  EXPECT_TRUE(steady.flat);

  const std::vector<std::uint64_t> growing = {10, 10, 10, 10, 10, 11, 12, 13, 14};
  const MemoryTrend grew = memory_trend(growing, 0.0, 0.10);
  EXPECT_EQ(grew.early_kib, 10u);
  EXPECT_EQ(grew.late_kib, 14u);
  EXPECT_DOUBLE_EQ(grew.ratio, 1.4);
  EXPECT_FALSE(grew.flat);
  EXPECT_TRUE(memory_trend(growing, 0.0, 0.5).flat);
}

TEST(MemoryTrend, TooFewSamplesGiveNoVerdict) {
  const MemoryTrend trend = memory_trend({5, 6, 7, 8}, 0.5, 0.10);
  EXPECT_FALSE(trend.flat);
  EXPECT_EQ(trend.problem,
            "only 2 samples after warm-up (3 needed): sample more often or run longer");
}

TEST(ResidentMemory, ReadsThisProcess) {
  const auto kib = resident_kib(getpid());
  ASSERT_TRUE(kib.has_value());
  EXPECT_GT(*kib, 0u);
  EXPECT_FALSE(resident_kib(-1).has_value());
}

}  // namespace
}  // namespace yoke::soak
