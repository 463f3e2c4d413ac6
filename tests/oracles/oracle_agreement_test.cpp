// The oracles referee each other before they referee yoke. No yoke code runs here.
#include <gtest/gtest.h>

#include "exhaustive.h"
#include "lemon_oracle.h"
#include "random_graphs.h"
#include "test_scale.h"
#include "tests/oracles/all_modes.h"

namespace yoke::oracle {
namespace {


// oracle: LEMON MaxWeightedMatching, MaxWeightedPerfectMatching and MaxMatching (Debian
// liblemon-dev 1.3.1) against exhaustive enumeration, on graphs of 1..12 vertices.
TEST(OracleAgreement, LemonAgreesWithExhaustiveEnumeration) {
  const int seeds = scaled(3);
  int compared = 0;
  for (const RandomGraphSpec& spec : small_random_specs(12)) {
    for (int seed = 0; seed < seeds; ++seed) {
      const Graph graph = random_graph(spec, 7000 + static_cast<std::uint64_t>(seed));
      const ExhaustiveOptima truth = exhaustive_optima(graph);
      for (Mode mode : kAllModes) {
        const Answer lemon = lemon_optimum(graph, mode);
        const Answer& want = truth.for_mode(mode);
        const std::string where = spec.describe() + " seed " + std::to_string(seed) + " " +
                                  mode_name(mode);
        ASSERT_EQ(lemon.feasible, want.feasible) << where;
        if (!want.feasible) continue;
        ASSERT_EQ(lemon.weight, want.weight) << where;
        if (mode != Mode::max_weight) {
          ASSERT_EQ(lemon.pairs, want.pairs) << where;
        }
        ++compared;
      }
      ASSERT_EQ(lemon_max_cardinality(graph), truth.max_cardinality.pairs) << spec.describe();
    }
  }
  EXPECT_GT(compared, 300 * seeds);  // the sweep really compared something
}

// oracle: exhaustive enumeration counts matchings; common knowledge: K_n has the telephone
// numbers 1, 1, 2, 4, 10, 26, 76, 232, 764, 2620, 9496, 35696, 140152 of matchings.
TEST(OracleAgreement, ExhaustiveEnumerationVisitsEveryMatchingOfKn) {
  const std::uint64_t telephone[] = {1, 1, 2, 4, 10, 26, 76, 232, 764, 2620, 9496, 35696, 140152};
  for (std::size_t n = 0; n < std::size(telephone); ++n) {
    const Graph kn = random_graph({n, 1.0, 1, 1, 0}, 1);
    EXPECT_EQ(exhaustive_optima(kn).matchings, telephone[n]) << "K_" << n;
  }
}

}  // namespace
}  // namespace yoke::oracle
