// Churn control: a pool with a churn bonus b must maximise w(M) + b x |M ∩ M_before| exactly.
// After every commit of seeded streams, the pool's objective is compared with an outside
// optimum of the graph whose standing pairs (the matching before the batch) are raised by b:
// oracle: LEMON MaxWeightedMatching / MaxWeightedPerfectMatching / MaxMatching (Debian
// liblemon-dev 1.3.1, lemon_oracle.h) and, on graphs of up to 12 vertices, exhaustive
// enumeration (exhaustive.h). The pool's own certificate must hold as well.
#include <gtest/gtest.h>

#include <algorithm>
#include <map>
#include <set>
#include <string>
#include <tuple>
#include <utility>
#include <vector>

#include "checked_solve.h"
#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "exhaustive.h"
#include "lemon_oracle.h"
#include "stream_cases.h"
#include "test_scale.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::oracle {
namespace {

using gen::StreamFamily;
using KeyPair = std::pair<VertexKey, VertexKey>;

std::set<KeyPair> pairs_of(const std::vector<MatchedPair>& matching) {
  std::set<KeyPair> pairs;
  for (const MatchedPair& p : matching) pairs.insert({p.a, p.b});
  return pairs;
}

// The pool's graph with its own weights, each standing pair (in `standing`) raised by bonus:
// the weights a commit that started from `standing` optimises.
Graph favoured_graph(const PoolExport& exported, const std::set<KeyPair>& standing, Weight bonus) {
  std::vector<Edge> edges;
  for (const Edge& e : exported.graph.edges()) {
    const bool matched = exported.certificate.mate[e.a] == e.b;
    const Weight own = e.w - (matched ? exported.matched_bonus : 0);
    const VertexKey a = exported.keys[e.a];
    const VertexKey b = exported.keys[e.b];
    const bool stood = standing.contains({std::min(a, b), std::max(a, b)});
    edges.push_back({e.a, e.b, own + (stood ? bonus : 0)});
  }
  return Graph::from_edges(exported.keys.size(), std::move(edges));
}

// A pair stands through a batch while its edge does: a batch that removes the edge or one of its
// vertices ends the pair's standing, even if the edge comes back within the batch.
std::set<KeyPair> standing_through(std::set<KeyPair> pairs, const std::vector<Event>& batch) {
  for (const Event& e : batch) {
    if (e.kind == EventKind::unset_edge) pairs.erase({std::min(e.u, e.v), std::max(e.u, e.v)});
    if (e.kind != EventKind::remove_vertex) continue;
    std::erase_if(pairs, [&](const KeyPair& p) { return p.first == e.u || p.second == e.u; });
  }
  return pairs;
}

void expect_churn_optimal(StreamFamily family, Mode mode, Weight bonus, std::uint64_t seed,
                          std::size_t max_vertices, const Oracle& oracle, bool exhaustive) {
  const std::string label = std::string("churn_") + gen::stream_family_name(family) + "_" +
                            mode_name(mode) + "_b" + std::to_string(bonus) + "_seed" +
                            std::to_string(seed);
  gen::StreamSpec spec = gen::test_stream_spec(family, seed, max_vertices, 30);
  PoolLimits limits;
  limits.max_vertices = 4096;
  limits.max_abs_weight = 1'000'000;
  Pool pool(mode, limits, bonus);
  gen::EventStream stream(spec);
  std::vector<Event> batch;
  while (stream.next_batch(batch)) {
    ASSERT_FALSE(pool.check(batch).has_value()) << label;
    const std::set<KeyPair> standing = standing_through(pairs_of(pool.matching()), batch);
    const CommitResult result = pool.commit(batch);
    SCOPED_TRACE(label + ", commit " + std::to_string(result.commit));
    const PoolExport exported = pool.export_certified();
    ASSERT_EQ(exported.matched_bonus, bonus);

    // The pool's own proof, on the weights it holds (each pair favoured by the bonus).
    const CheckResult verdict = check_certificate(exported.graph, exported.certificate);
    ASSERT_TRUE(verdict.ok) << verdict.failure;

    // Reported weights are the outside world's: they add up to result.weight.
    const std::vector<MatchedPair> matching = pool.matching();
    Weight own_total = 0;
    std::size_t kept = 0;
    for (const MatchedPair& p : matching) {
      own_total += p.w;
      kept += standing.contains({p.a, p.b}) ? 1 : 0;
    }
    ASSERT_EQ(own_total, result.weight);
    ASSERT_EQ(matching.size(), result.pairs);

    // The objective of the batch, against the outside optimum of the favoured graph.
    const Graph favoured = favoured_graph(exported, standing, bonus);
    const Answer best = favoured.vertex_count() <= kMaxExhaustiveVertices || !exhaustive
                            ? oracle(favoured, mode)
                            : lemon_optimum(favoured, mode);
    if (mode == Mode::perfect && !best.feasible) {
      ASSERT_EQ(result.status, SolveStatus::no_perfect_matching);
      continue;
    }
    ASSERT_EQ(result.weight + bonus * static_cast<Weight>(kept), best.weight)
        << "\n  graph: " << write_reproducer(favoured, mode, label);
    if (mode != Mode::max_weight) {
      ASSERT_EQ(result.pairs, best.pairs);
    }
  }
}

class ChurnAgainstOracles : public testing::TestWithParam<StreamCase> {};

TEST_P(ChurnAgainstOracles, EveryCommitMaximisesWeightPlusBonusForKeptPairs) {
  const auto [family, mode] = GetParam();
  const Oracle lemon = [](const Graph& g, Mode m) { return lemon_optimum(g, m); };
  const Oracle enumeration = [](const Graph& g, Mode m) { return exhaustive_optimum(g, m); };
  const int seeds = scaled(30);
  for (int seed = 0; seed < seeds && !HasFailure(); ++seed) {
    const auto s = static_cast<std::uint64_t>(5000 + seed);
    // Bonuses from a tie-breaker to one that outweighs most weight changes.
    const Weight bonus = Weight{1} << (2 * (seed % 6));
    expect_churn_optimal(family, mode, bonus, s, 40, lemon, false);
    // Enumeration while the graph has at most 14 vertices, LEMON once arrivals outgrow that.
    expect_churn_optimal(family, mode, bonus, s, 10, enumeration, true);
  }
}

INSTANTIATE_TEST_SUITE_P(Streams, ChurnAgainstOracles, all_stream_cases(), stream_case_name);

// Common knowledge, by hand: a standing pair {1,2} of weight 5 against a rival {2,3}.
TEST(Churn, AStandingPairIsKeptUnlessTheRivalGainsMoreThanTheBonus) {
  Pool pool(Mode::max_weight, {}, 3);
  pool.commit(std::vector<Event>{{EventKind::set_edge, 1, 2, 5}, {EventKind::add_vertex, 3, 0, 0}});
  // 7 - 5 = 2 < 3: kept.
  CommitResult result = pool.commit(std::vector<Event>{{EventKind::set_edge, 2, 3, 7}});
  EXPECT_TRUE(result.diff.added.empty());
  EXPECT_EQ(pool.mate_of(1), 2u);
  EXPECT_EQ(result.weight, 5);
  // 9 - 5 = 4 > 3: replaced, and the new pair reports its own weight.
  result = pool.commit(std::vector<Event>{{EventKind::set_edge, 2, 3, 9}});
  EXPECT_EQ(pool.mate_of(2), 3u);
  EXPECT_EQ(result.weight, 9);
  EXPECT_EQ(result.diff.removed, (std::vector<MatchedPair>{{1, 2, 5}}));
  EXPECT_EQ(result.diff.added, (std::vector<MatchedPair>{{2, 3, 9}}));
  // A standing pair whose weight changes keeps its bonus: {2,3} at 6 still beats {1,2} at 5.
  result = pool.commit(std::vector<Event>{{EventKind::set_edge, 2, 3, 6}, {EventKind::set_edge, 1, 2, 8}});
  EXPECT_EQ(pool.mate_of(2), 3u);
  EXPECT_EQ(result.weight, 6);
  const std::optional<VertexExplanation> why = pool.explain(2);
  ASSERT_TRUE(why.has_value());
  EXPECT_EQ(why->pair_weight, 6);
  EXPECT_EQ(why->pair_bonus, 3);
  const PoolExport exported = pool.export_certified();
  EXPECT_TRUE(check_certificate(exported.graph, exported.certificate).ok);
}

TEST(Churn, TheBonusTakesRoomFromTheWeightBound) {
  PoolLimits limits;
  limits.max_vertices = 1000;
  const Pool plain(Mode::max_weight, limits);
  const Pool favoured(Mode::max_weight, limits, 1000);
  EXPECT_EQ(favoured.limits().max_abs_weight + 1000, plain.limits().max_abs_weight);
  EXPECT_THROW(Pool(Mode::max_weight, limits, -1), InputError);
  EXPECT_THROW(Pool(Mode::max_weight, limits, plain.limits().max_abs_weight), InputError);
  limits.max_abs_weight = plain.limits().max_abs_weight;
  EXPECT_THROW(Pool(Mode::max_weight, limits, 1), InputError);
}

TEST(Churn, ASavedPoolKeepsItsBonus) {
  Pool pool(Mode::max_weight, {}, 4);
  pool.commit(std::vector<Event>{{EventKind::set_edge, 1, 2, 5}, {EventKind::set_edge, 2, 3, 2}});
  const std::unique_ptr<Pool> copy = Pool::restore(pool.save());
  EXPECT_EQ(copy->churn_bonus(), 4);
  EXPECT_EQ(copy->weight(), 5);
  const std::vector<Event> rival{{EventKind::set_edge, 2, 3, 8}};  // gains 3 < 4: kept
  EXPECT_EQ(copy->commit(rival).diff.added, pool.commit(rival).diff.added);
  EXPECT_EQ(copy->mate_of(1), 2u);
}

}  // namespace
}  // namespace yoke::oracle
