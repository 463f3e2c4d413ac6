// The incremental pool against LEMON: seeded event streams on small graphs of every family;
// after every commit the pool's optimum must be LEMON's for the same graph. oracle: LEMON
// MaxWeightedMatching, MaxWeightedPerfectMatching and MaxMatching (Debian liblemon-dev 1.3.1),
// through lemon_oracle.h.
#include <gtest/gtest.h>

#include <string>
#include <tuple>
#include <vector>

#include "checked_solve.h"
#include "yoke/pool.h"
#include "lemon_oracle.h"
#include "stream_cases.h"
#include "test_scale.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::oracle {
namespace {

using gen::StreamFamily;

class PoolAgainstLemon : public testing::TestWithParam<StreamCase> {};

TEST_P(PoolAgainstLemon, EveryCommitHasLemonsOptimum) {
  const auto [family, mode] = GetParam();
  const Oracle lemon = [](const Graph& g, Mode m) { return lemon_optimum(g, m); };
  const int seeds = scaled(40);
  for (int seed = 0; seed < seeds && !HasFailure(); ++seed) {
    const auto s = static_cast<std::uint64_t>(3000 + seed);
    const std::string label = std::string("pool_lemon_") + gen::stream_family_name(family) +
                              "_seed" + std::to_string(s);
    Pool pool(mode);
    gen::EventStream stream(gen::test_stream_spec(family, s, 40, 40));
    std::vector<Event> batch;
    while (stream.next_batch(batch)) {
      ASSERT_FALSE(pool.check(batch).has_value()) << label;
      const CommitResult result = pool.commit(batch);
      const PoolExport exported = pool.export_certified();
      SolveResult answer;  // the commit's answer in the form same_optimum takes
      answer.status = result.status;
      answer.weight = result.weight;
      answer.pairs = result.pairs;
      // LEMON 1.3.1 (Debian liblemon-dev): same weight; in max-cardinality and perfect mode
      // the same number of pairs and the same verdict on whether a perfect matching exists.
      const testing::AssertionResult same = same_optimum(exported.graph, mode, answer, lemon);
      if (!same) {
        FAIL() << label << ", commit " << result.commit << ": " << same.message()
               << "\n  graph: " << write_reproducer(exported.graph, mode, label);
      }
    }
  }
}

INSTANTIATE_TEST_SUITE_P(Streams, PoolAgainstLemon, all_stream_cases(), stream_case_name);

}  // namespace
}  // namespace yoke::oracle
