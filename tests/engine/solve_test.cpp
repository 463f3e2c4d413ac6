// Engine-level behaviour of yoke::solve that the oracle suites do not settle: input bounds,
// determinism, degenerate graphs, the perfect-mode shortfall, and the warm start. Optimality
// itself is checked against outside oracles in tests/oracles/.
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/solve.h"
#include "tools/graphgen/generators.h"

namespace yoke {
namespace {

Graph make_graph(std::size_t n, std::vector<Edge> edges) { return Graph::from_edges(n, std::move(edges)); }

void expect_certified(const Graph& graph, const SolveResult& result) {
  const CheckResult check = check_certificate(graph, result.certificate);
  EXPECT_TRUE(check.ok) << check.failure;
}

TEST(Solve, EmptyAndEdgelessGraphs) {
  const Graph empty;
  const SolveResult none = solve(empty, Mode::max_weight);
  EXPECT_EQ(none.weight, 0);
  EXPECT_EQ(none.pairs, 0u);
  expect_certified(empty, none);

  const Graph isolated(5);
  for (Mode mode : {Mode::max_weight, Mode::max_cardinality}) {
    const SolveResult r = solve(isolated, mode);
    EXPECT_EQ(r.pairs, 0u);
    expect_certified(isolated, r);
  }
  EXPECT_EQ(solve(isolated, Mode::perfect).status, SolveStatus::no_perfect_matching);
}

TEST(Solve, RejectsAWeightAboveTheBoundAndNamesIt) {
  const Graph graph = make_graph(2, {{0, 1, kMaxAbsWeight + 1}});
  try {
    solve(graph, Mode::max_weight);
    FAIL() << "no InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("2^52"), std::string::npos) << e.what();
  }
  const Graph negative = make_graph(2, {{0, 1, -kMaxAbsWeight - 1}});
  EXPECT_THROW(solve(negative, Mode::max_weight), InputError);
  // The bound itself is accepted, and the solver's doubled duals do not overflow with it.
  const Graph at_bound = make_graph(3, {{0, 1, kMaxAbsWeight}, {1, 2, kMaxAbsWeight - 1}});
  const SolveResult r = solve(at_bound, Mode::max_weight);
  EXPECT_EQ(r.weight, kMaxAbsWeight);
  expect_certified(at_bound, r);
}

TEST(Solve, RejectsACardinalityOffsetBeyondTheBound) {
  // Spread 2^51 over many pairs: the max-cardinality offset would pass 2^52.
  std::vector<Edge> edges;
  for (Vertex v = 0; v + 1 < 8; v += 2) edges.push_back({v, v + 1, (v % 4 == 0) ? (Weight{1} << 51) : -(Weight{1} << 51)});
  const Graph graph = make_graph(8, edges);
  EXPECT_NO_THROW(solve(graph, Mode::max_weight));
  try {
    solve(graph, Mode::max_cardinality);
    FAIL() << "no InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("cardinality offset"), std::string::npos) << e.what();
  }
}

TEST(Solve, SameGraphSameMatching) {
  const gen::GeneratedGraph city = gen::city(3000, 10, 11);
  const Graph graph = city.to_graph();
  const SolveResult first = solve(graph, Mode::max_weight);
  const SolveResult second = solve(graph, Mode::max_weight);
  EXPECT_EQ(first.mate, second.mate);
  EXPECT_EQ(first.certificate.vertex_dual2, second.certificate.vertex_dual2);
  EXPECT_EQ(first.certificate.blossoms.size(), second.certificate.blossoms.size());
  expect_certified(graph, first);
}

TEST(Solve, PerfectShortfallComesWithAMaxCardinalityCertificate) {
  // A triangle with a pendant vertex on each corner plus one more isolated vertex: 7 vertices,
  // so no perfect matching (common knowledge: odd vertex count).
  const Graph graph = make_graph(7, {{0, 1, 5}, {1, 2, 5}, {2, 0, 5}, {0, 3, 1}, {1, 4, 1}, {2, 5, 1}});
  const SolveResult r = solve(graph, Mode::perfect);
  EXPECT_EQ(r.status, SolveStatus::no_perfect_matching);
  EXPECT_EQ(r.pairs, 3u);
  EXPECT_EQ(r.certificate.mode, Mode::max_cardinality);
  expect_certified(graph, r);
}

TEST(Solve, PerfectModeDualsMayBeNegative) {
  // A 4-cycle has two perfect matchings: {0-1, 2-3} weighing -10 and {1-2, 3-0} weighing -10
  // (exhaustive enumeration). The dual objective equals -10, so some dual is negative.
  const Graph graph = make_graph(4, {{0, 1, -5}, {1, 2, 10}, {2, 3, -5}, {3, 0, -20}});
  const SolveResult r = solve(graph, Mode::perfect);
  ASSERT_EQ(r.status, SolveStatus::optimal);
  EXPECT_EQ(r.pairs, 2u);
  EXPECT_EQ(r.weight, -10);
  EXPECT_EQ(r.certificate.weight_offset, 0);
  bool some_negative = false;
  for (Weight d : r.certificate.vertex_dual2) some_negative |= d < 0;
  EXPECT_TRUE(some_negative);
  expect_certified(graph, r);
}

TEST(Solve, WarmStartLeavesFewRootsOnCityGraphs) {
  // The fractional warm start should leave the exact search a small share of the vertices as
  // roots (one per half-matched odd cycle); a regression here costs speed, not correctness.
  const gen::GeneratedGraph city = gen::city(20000, 10, 3);
  const Graph graph = city.to_graph();
  const SolveResult r = solve(graph, Mode::max_weight);
  expect_certified(graph, r);
  EXPECT_GT(r.stats.warm_start_searches, r.stats.searches);
  EXPECT_LT(r.stats.searches, city.vertex_count / 5);
}

}  // namespace
}  // namespace yoke
