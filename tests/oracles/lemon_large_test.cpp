// yoke against LEMON on graphs of about 10^4 vertices from every generator family, one case per
// family and mode. oracle: LEMON MaxWeightedMatching, MaxWeightedPerfectMatching and
// MaxMatching (Debian liblemon-dev 1.3.1).
#include <gtest/gtest.h>

#include <functional>
#include <string>

#include "checked_solve.h"
#include "lemon_oracle.h"
#include "test_scale.h"
#include "tools/graphgen/generators.h"
#include "tests/oracles/all_modes.h"

namespace yoke::oracle {
namespace {

// The small scale (sanitizer build) solves graphs a fifth of the size.
std::size_t sized(std::size_t full) { return small_scale() ? full / 5 : full; }

struct LargeCase {
  const char* name;
  std::function<gen::GeneratedGraph()> make;
};

const LargeCase kCases[] = {
    {"City10k", [] { return gen::city(sized(10000), 6, 1); }},
    {"SparseRandom10k",
     [] { return gen::sparse_random(sized(10000), sized(30000), -50, 1000, 2); }},
    {"DispatchBipartite10k",
     [] { return gen::dispatch_bipartite(sized(4000), sized(6000), 4, 3); }},
    {"Complete300", [] { return gen::complete(small_scale() ? 120 : 300, -100, 1000, 4); }},
    {"BlossomStress10k", [] { return gen::blossom_stress(sized(10000), 5); }},
};


class LemonLarge : public testing::TestWithParam<std::tuple<std::size_t, Mode>> {};

TEST_P(LemonLarge, MatchesLemon) {
  const LargeCase& c = kCases[std::get<0>(GetParam())];
  const Graph graph = c.make().to_graph();
  expect_optimal(graph, std::get<1>(GetParam()),
                 [](const Graph& g, Mode m) { return lemon_optimum(g, m); },
                 std::string("lemon_large_") + c.name);
}

std::string large_case_name(const testing::TestParamInfo<LemonLarge::ParamType>& info) {
  return std::string(kCases[std::get<0>(info.param)].name) + "_" +
         mode_label(std::get<1>(info.param));
}

INSTANTIATE_TEST_SUITE_P(Generators, LemonLarge,
                         testing::Combine(testing::Range<std::size_t>(0, std::size(kCases)),
                                          testing::ValuesIn(kAllModes)),
                         large_case_name);

}  // namespace
}  // namespace yoke::oracle
