// Hand-built shapes that stress the blossom machinery, each checked against LEMON or
// exhaustive enumeration. Each comment says what makes the shape hard.
#include <gtest/gtest.h>

#include <random>

#include "checked_solve.h"
#include "exhaustive.h"
#include "lemon_oracle.h"
#include "random_graphs.h"
#include "shapes.h"
#include "test_scale.h"
#include "tools/graphgen/generators.h"
#include "tests/oracles/all_modes.h"

namespace yoke::oracle {
namespace {


Answer by_lemon(const Graph& graph, Mode mode) { return lemon_optimum(graph, mode); }
Answer by_enumeration(const Graph& graph, Mode mode) { return exhaustive_optimum(graph, mode); }

// Runs every weight assignment drawn from [lo, hi] on a fixed shape against exhaustive
// enumeration, and adds up yoke's blossom counters over the sweep.
SolveStats sweep_weights(const Graph& shape, Weight lo, Weight hi, int count,
                         const std::string& name) {
  SolveStats total;
  std::mt19937_64 rng(std::hash<std::string>{}(name));
  std::uniform_int_distribution<Weight> weight(lo, hi);
  for (int i = 0; i < count && !testing::Test::HasFailure(); ++i) {
    std::vector<Weight> weights(shape.edge_count());
    for (Weight& w : weights) w = weight(rng);
    const Graph graph = with_weights(shape, weights);
    const ExhaustiveOptima truth = exhaustive_optima(graph);
    const Oracle oracle = [&truth](const Graph&, Mode mode) { return truth.for_mode(mode); };
    for (Mode mode : kAllModes) {
      const SolveResult r = expect_optimal(graph, mode, oracle, name + "_" + std::to_string(i));
      total.blossoms_formed += r.stats.blossoms_formed;
      total.blossoms_expanded += r.stats.blossoms_expanded;
    }
  }
  return total;
}

// A triangle whose corner 2 carries two pendant vertices that compete for it. The triangle
// shrinks into a blossom based at corner 2 and matched to one pendant; the search from the other
// pendant enters the blossom at its base and labels it odd (T); if the blossom's dual is the
// first bound to run out it falls to zero mid-search and the blossom is expanded, its cycle
// relabelled along the even side. A stem on corner 0 moves the entry away from the base.
// A triangle sharing its edge 3-6 with a pentagon, plus a pendant: two overlapping odd cycles,
// so a blossom shrunk on one must open again when the other one wins.
// oracle: exhaustive enumeration, over random weights of each shape.
TEST(StressShapesExhaustive, TBlossomExpansionSmallShapes) {
  const Graph two_pendants =
      Graph::from_edges(5, {{0, 1, 1}, {1, 2, 1}, {2, 0, 1}, {2, 3, 1}, {2, 4, 1}});
  const Graph shared_edge = Graph::from_edges(
      7, {{1, 6, 1}, {5, 4, 1}, {4, 6, 1}, {0, 3, 1}, {3, 1, 1}, {0, 5, 1}, {6, 3, 1}, {2, 5, 1}});
  const int count = scaled(3000);
  SolveStats total = sweep_weights(two_pendants, 0, 8, count, "t_expand_two_pendants");
  for (const SolveStats& more :
       {sweep_weights(with_stem(two_pendants, 0, 2, 1), -3, 9, count, "t_expand_stem"),
        sweep_weights(shared_edge, 0, 8, count, "t_expand_shared_edge")}) {
    total.blossoms_formed += more.blossoms_formed;
    total.blossoms_expanded += more.blossoms_expanded;
  }
  // How often yoke's current search order takes these paths (information, not a requirement;
  // the city sweep below asserts that expansions are exercised).
  RecordProperty("blossoms_formed", static_cast<int>(total.blossoms_formed));
  RecordProperty("blossoms_expanded", static_cast<int>(total.blossoms_expanded));
}

// City graphs of 60..120 points expand T-blossoms in most solves: many short odd cycles with
// close weights, so blossoms form in one search and are entered through their base in the next.
// oracle: LEMON (Debian liblemon-dev 1.3.1).
TEST(StressShapesLemon, TBlossomExpansionCityGraphs) {
  SolveStats total;
  const int seeds = scaled(20);
  for (std::size_t n : {60, 90, 120}) {
    for (int seed = 0; seed < seeds && !HasFailure(); ++seed) {
      const Graph graph = gen::city(n, 4, static_cast<std::uint64_t>(seed)).to_graph();
      for (Mode mode : kAllModes) {
        const SolveResult r = expect_optimal(
            graph, mode, by_lemon, "t_expand_city_n" + std::to_string(n) + "_seed" +
                                       std::to_string(seed));
        total.blossoms_expanded += r.stats.blossoms_expanded;
      }
    }
  }
  // Coverage, not correctness: the sweep must still drive yoke through T-blossom expansion
  // (SolveStats::blossoms_expanded counts odd blossoms whose dual reached zero in a search).
  EXPECT_GT(total.blossoms_expanded, 0U) << "sweep no longer expands T-blossoms (SolveStats)";
}

// Two pentagons joined through a middle vertex, with stems: a blossom can be entered from
// either side, relabelled, and expanded with the alternating path running through it in
// either direction (the path through an expanded T-blossom goes the even way round).
// oracle: exhaustive enumeration.
TEST(StressShapesExhaustive, TBlossomExpansionTwoPentagons) {
  Graph shape = Graph::from_edges(
      11, {{0, 1, 1}, {1, 2, 1}, {2, 3, 1}, {3, 4, 1}, {4, 0, 1}, {5, 6, 1}, {6, 7, 1},
           {7, 8, 1}, {8, 9, 1}, {9, 5, 1}, {2, 10, 1}, {10, 7, 1}});
  shape = with_stem(with_stem(shape, 0, 1, 1), 8, 1, 1);  // 13 vertices
  sweep_weights(shape, 0, 8, scaled(600), "t_expand_pentagons");
}

// A triangle of triangles (9 vertices) with a stem: heavy inner triangles shrink first, then the
// outer odd cycle through them shrinks into a blossom that contains blossoms; expanding the
// outer one must restore the inner ones with their own bases.
// oracle: exhaustive enumeration, fixed level weights and random weights.
TEST(StressShapesExhaustive, BlossomsInsideBlossomsSmall) {
  const Graph nested = with_stem(nested_odd_cycles(2, 3, 4, 3), 4, 2, 2);  // 11 vertices
  const ExhaustiveOptima truth = exhaustive_optima(nested);
  const Oracle oracle = [&truth](const Graph&, Mode mode) { return truth.for_mode(mode); };
  for (Mode mode : kAllModes) expect_optimal(nested, mode, oracle, "nested_3x3_stem");
  sweep_weights(nested, 0, 7, scaled(1500), "nested_3x3_stem_random");
  sweep_weights(with_stem(nested_odd_cycles(2, 3, 1, 1), 0, 1, 1), -2, 5, scaled(1500),
                "nested_3x3_pendant_random");
}

// Deeper nesting: triangles of triangles four and eight levels down (81 and 6561 vertices, plus
// a stem), and pentagons of pentagons. Blossoms nest as deep as the construction.
// oracle: LEMON MaxWeightedMatching / MaxWeightedPerfectMatching (Debian liblemon-dev 1.3.1).
TEST(StressShapesLemon, BlossomsInsideBlossomsDeep) {
  const Graph shapes[] = {
      with_stem(nested_odd_cycles(4, 3, 5, 2), 0, 1, 1),
      with_stem(nested_odd_cycles(3, 5, 2, 1), 7, 3, 1),
      with_stem(nested_odd_cycles(8, 3, 10, 1), 100, 1, 3),
      nested_odd_cycles(5, 3, 1, 0),  // all weights equal: ties at every level
  };
  int k = 0;
  for (const Graph& g : shapes) {
    for (Mode mode : kAllModes) {
      expect_optimal(g, mode, by_lemon, "nested_deep_" + std::to_string(k));
    }
    ++k;
  }
}

// A long chain of odd cycles joined by single edges: blossoms form all along the chain and
// augmenting paths cross many of them. oracle: LEMON (Debian liblemon-dev 1.3.1).
TEST(StressShapesLemon, LongOddCycleChain) {
  const struct {
    std::size_t count, length;
    Weight lo, hi;
  } chains[] = {{3000, 3, 1, 9}, {1500, 5, -2, 20}, {400, 21, 5, 5}, {2, 2001, 1, 3}};
  std::uint64_t seed = 11;
  for (const auto& c : chains) {
    const Graph g = odd_cycle_chain(c.count, c.length, c.lo, c.hi, seed++);
    for (Mode mode : kAllModes) {
      expect_optimal(g, mode, by_lemon,
                     "odd_chain_" + std::to_string(c.count) + "x" + std::to_string(c.length));
    }
  }
}

// Zero and negative weights: max-weight must leave negative edges out and may take or skip
// zero edges; max-cardinality and perfect must take negative edges when needed for size.
// oracle: LEMON (Debian liblemon-dev 1.3.1) on larger graphs, exhaustive enumeration below.
TEST(StressShapesLemon, ZeroAndNegativeWeights) {
  const RandomGraphSpec specs[] = {
      {60, 0.1, -20, 0, 0}, {60, 0.1, 0, 0, 0}, {80, 0.08, -5, 1, 3}, {200, 0.03, -100, -1, 0},
      {50, 0.5, -3, 3, 0}};
  for (std::uint64_t seed = 0; seed < 10; ++seed) {
    for (const RandomGraphSpec& spec : specs) {
      const Graph g = random_graph(spec, seed);
      for (Mode mode : kAllModes) {
        expect_optimal(g, mode, by_lemon, "zero_negative_" + spec.describe() + "_seed" +
                                              std::to_string(seed));
      }
    }
  }
  // All-negative complete graphs: max-weight takes nothing; the others take the least bad.
  for (std::size_t n = 2; n <= 12; ++n) {
    const Graph g = random_graph({n, 1.0, -50, -1, 0}, n);
    for (Mode mode : kAllModes) {
      expect_optimal(g, mode, by_enumeration, "all_negative_K" + std::to_string(n));
    }
  }
}

// Ties everywhere: all weights equal, so the max-weight optimum is w times the maximum
// cardinality and every tight edge is a candidate; tie-breaking bugs show up as wrong sizes.
// oracle: LEMON (MaxMatching size times w, and MaxWeightedMatching) (Debian liblemon-dev 1.3.1).
TEST(StressShapesLemon, TiesEverywhere) {
  for (std::uint64_t seed = 0; seed < 12; ++seed) {
    const Graph shapes[] = {
        random_graph({150, 0.03, 7, 7, 5}, seed),
        random_graph({40, 1.0, 7, 7, 0}, seed),
        with_uniform_weight(odd_cycle_chain(100, 7, 1, 1, seed), 7),
        with_uniform_weight(nested_odd_cycles(4, 3, 1, 0), 7),
    };
    int k = 0;
    for (const Graph& g : shapes) {
      const std::string label = "ties_" + std::to_string(k++) + "_seed" + std::to_string(seed);
      const SolveResult r = expect_optimal(g, Mode::max_weight, by_lemon, label);
      EXPECT_EQ(r.weight, 7 * static_cast<Weight>(lemon_max_cardinality(g))) << label;
      expect_optimal(g, Mode::max_cardinality, by_lemon, label);
      expect_optimal(g, Mode::perfect, by_lemon, label);
    }
  }
}

// Isolated vertices: never matched, never in a blossom; in perfect mode one isolated vertex
// makes a perfect matching impossible. oracle: LEMON (Debian liblemon-dev 1.3.1).
TEST(StressShapesLemon, IsolatedVertices) {
  for (std::uint64_t seed = 0; seed < 10; ++seed) {
    const Graph shapes[] = {
        random_graph({100, 0.05, -3, 20, 50}, seed),
        with_isolated(complete_graph(10, 3), 1 + seed % 2),
        with_isolated(petersen_graph(2), 2),
        Graph(static_cast<std::size_t>(seed)),  // no edges at all
    };
    int k = 0;
    for (const Graph& g : shapes) {
      for (Mode mode : kAllModes) {
        expect_optimal(g, mode, by_lemon,
                       "isolated_" + std::to_string(k) + "_seed" + std::to_string(seed));
      }
      ++k;
    }
  }
}

}  // namespace
}  // namespace yoke::oracle
