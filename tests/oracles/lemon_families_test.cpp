// yoke against LEMON on thousands of small graphs from every family of tools/graphgen, in every
// mode. oracle: LEMON MaxWeightedMatching, MaxWeightedPerfectMatching and MaxMatching (Debian
// liblemon-dev 1.3.1).
#include <gtest/gtest.h>

#include <algorithm>
#include <functional>
#include <string>

#include "checked_solve.h"
#include "lemon_oracle.h"
#include "test_scale.h"
#include "tools/graphgen/generators.h"
#include "tests/oracles/all_modes.h"

namespace yoke::oracle {
namespace {

struct Family {
  const char* name;
  // A graph of about n vertices from the seed; parameters vary with the seed too.
  std::function<gen::GeneratedGraph(std::size_t n, std::uint64_t seed)> make;
};

const Family kFamilies[] = {
    {"City", [](std::size_t n, std::uint64_t seed) {
       return gen::city(n, 2 + static_cast<int>(seed % 6), seed);
     }},
    {"SparseRandom", [](std::size_t n, std::uint64_t seed) {
       const std::size_t most = n * (n - 1) / 2;
       const std::size_t m = std::min(most, n * (1 + seed % 3));
       // Even seeds: wide mixed-sign weights; odd seeds: near-ties.
       return seed % 2 == 0 ? gen::sparse_random(n, m, -20, 100, seed)
                            : gen::sparse_random(n, m, 1, 3, seed);
     }},
    {"DispatchBipartite", [](std::size_t n, std::uint64_t seed) {
       // About half couriers, at least one of each side.
       const std::size_t couriers = std::clamp<std::size_t>(n / 2 + seed % 3 - 1, 1, n - 1);
       return gen::dispatch_bipartite(couriers, n - couriers, 1 + static_cast<int>(seed % 4),
                                      seed);
     }},
    {"Complete", [](std::size_t n, std::uint64_t seed) {
       return seed % 3 == 0 ? gen::complete(n, 0, 1, seed) : gen::complete(n, -10, 50, seed);
     }},
    {"BlossomStress", [](std::size_t n, std::uint64_t seed) {
       return gen::blossom_stress(n, seed);
     }},
};


class LemonFamilies : public testing::TestWithParam<std::tuple<std::size_t, Mode>> {};

TEST_P(LemonFamilies, SmallGraphsMatchLemon) {
  const Family& family = kFamilies[std::get<0>(GetParam())];
  const Mode mode = std::get<1>(GetParam());
  const Oracle lemon = [](const Graph& g, Mode m) { return lemon_optimum(g, m); };
  const int seeds = scaled(16);
  for (std::size_t n = 2; n <= 60; ++n) {
    for (int seed = 0; seed < seeds; ++seed) {
      const std::string label = std::string("lemon_") + family.name + "_n" + std::to_string(n) +
                                "_seed" + std::to_string(seed);
      gen::GeneratedGraph generated;
      try {
        generated = family.make(n, static_cast<std::uint64_t>(seed));
      } catch (const std::exception& error) {
        FAIL() << label << ": generator threw: " << error.what();
      }
      expect_optimal(generated.to_graph(), mode, lemon, label);
      if (HasFailure()) return;  // one reproducer per family and mode
    }
  }
}

std::string family_case_name(const testing::TestParamInfo<LemonFamilies::ParamType>& info) {
  return std::string(kFamilies[std::get<0>(info.param)].name) + "_" +
         mode_label(std::get<1>(info.param));
}

INSTANTIATE_TEST_SUITE_P(Generators, LemonFamilies,
                         testing::Combine(testing::Range<std::size_t>(0, std::size(kFamilies)),
                                          testing::ValuesIn(kAllModes)),
                         family_case_name);

}  // namespace
}  // namespace yoke::oracle
