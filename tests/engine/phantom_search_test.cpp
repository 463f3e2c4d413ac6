// The phantom vertex φ in the search (docs/mathematics.md §9): φ's edges are implicit, so
// every result here is checked against the graph with those edges written out (weight 0 to
// every other vertex) by the independent certificate checker, and its weight against the
// static solver's max-cardinality optimum of the graph without φ.
#include <gtest/gtest.h>

#include <algorithm>
#include <random>
#include <set>
#include <vector>

#include "solver/alternating_search.h"
#include "solver/phantom_prices.h"
#include "yoke/certificate.h"
#include "yoke/solve.h"

namespace yoke {
namespace {

// A connected-ish random graph on n vertices with weights in [low, high]: a path through all
// vertices in a shuffled order, then `extra` random edges. Small weight ranges make ties and
// blossoms.
std::vector<Edge> random_edges(std::size_t n, std::size_t extra, Weight low, Weight high,
                               std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_int_distribution<Weight> weight(low, high);
  std::vector<Vertex> order(n);
  for (Vertex v = 0; v < n; ++v) order[v] = v;
  std::shuffle(order.begin(), order.end(), rng);
  std::set<std::pair<Vertex, Vertex>> seen;
  std::vector<Edge> edges;
  auto add = [&](Vertex a, Vertex b) {
    if (a == b || !seen.insert({std::min(a, b), std::max(a, b)}).second) return;
    edges.push_back({a, b, weight(rng)});
  };
  for (std::size_t i = 1; i < n; ++i) add(order[i - 1], order[i]);
  std::uniform_int_distribution<Vertex> any(0, static_cast<Vertex>(n - 1));
  for (std::size_t i = 0; i < extra; ++i) add(any(rng), any(rng));
  return edges;
}

struct Case {
  std::size_t n;  // vertices of G; φ is vertex n
  std::vector<Edge> edges;
  Weight offset;  // the max-cardinality offset of G with φ's edges written out
  Graph implicit;  // G plus an isolated vertex n
  Graph explicit_graph;  // G plus φ's n edges of weight 0
};

Case make_case(std::size_t n, std::size_t extra, Weight low, Weight high, std::uint64_t seed) {
  Case c{n, random_edges(n, extra, low, high, seed), 0, Graph(0), Graph(0)};
  std::vector<Edge> with_phi = c.edges;
  for (Vertex v = 0; v < n; ++v) with_phi.push_back({v, static_cast<Vertex>(n), 0});
  c.explicit_graph = Graph::from_edges(n + 1, with_phi);
  c.offset = mode_weight_offset(c.explicit_graph, Mode::max_cardinality);
  c.implicit = Graph::from_edges(n + 1, c.edges);
  return c;
}

void expect_certified(const Case& c, const MatchingState& state) {
  Certificate cert;
  cert.mode = Mode::max_cardinality;
  cert.weight_offset = c.offset;
  cert.mate = state.mate.values();
  cert.vertex_dual2 = state.dual2;
  cert.blossoms = state.forest.certificate_blossoms({}, c.n + 1);
  const CheckResult check = check_certificate(c.explicit_graph, cert);
  ASSERT_TRUE(check.ok) << check.failure;
  // φ is matched whenever G misses a vertex; without φ's pair the matching is G's optimum.
  const SolveResult best = solve(Graph::from_edges(c.n, c.edges), Mode::max_cardinality);
  Weight weight = 0;
  std::size_t pairs = 0;
  for (const Edge& e : c.edges) {
    if (state.mate[e.a] == e.b) {
      weight += e.w;
      ++pairs;
    }
  }
  EXPECT_EQ(pairs, best.pairs);
  EXPECT_EQ(weight, best.weight);
}

// Runs the search from the roots of `state` (exposed with a positive dual), one run per parity
// as a pool does.
void run_roots(const Case& c, MatchingState& state, PhantomPrices& prices) {
  AlternatingSearch search(c.implicit, c.offset, state);
  search.set_phantom(static_cast<Vertex>(c.n), &prices);
  for (const Weight parity : {0, 1}) {
    bool any = false;
    for (Vertex v = 0; v <= c.n; ++v) {
      if (state.mate[v] != kNoVertex || state.dual2[v] == 0 || state.dual2[v] % 2 != parity) {
        continue;
      }
      search.add_root(v);
      any = true;
    }
    if (any) search.run();
  }
}

PhantomPrices joined_prices(const Case& c, const MatchingState& state) {
  PhantomPrices prices;
  prices.resize(c.n + 1);
  for (Vertex v = 0; v < c.n; ++v) prices.join(v, state.dual2[v]);
  return prices;
}

// φ enters a solved state: exposed, its price the least it may have (K - min u).
void enter_phantom(const Case& c, MatchingState& state, PhantomPrices& prices) {
  const PhantomPrices::Least least =
      prices.least([&](Vertex v) { return state.dual2[v]; }, [](Vertex) { return false; });
  state.dual2[c.n] = 2 * c.offset - least.price2;
}

// Every vertex a root at one uniform price: the whole optimum, φ included, found by the
// search alone, with φ in trees, blossoms and augmenting paths.
TEST(PhantomSearch, SolvesFromUniformPricesWithPhiAsAnyVertex) {
  for (std::uint64_t seed = 1; seed <= 60; ++seed) {
    const std::size_t n = 3 + 2 * (seed % 12);  // odd
    const Case c = make_case(n, n * (1 + seed % 3), seed % 2 == 0 ? 1 : -5, seed % 4 + 1, seed);
    MatchingState state(n + 1);
    Weight top = 0;
    for (const Edge& e : c.edges) top = std::max(top, e.w);
    for (Vertex v = 0; v <= n; ++v) state.dual2[v] = top + c.offset;
    PhantomPrices prices = joined_prices(c, state);
    run_roots(c, state, prices);
    SCOPED_TRACE(seed);
    expect_certified(c, state);
    EXPECT_NE(state.mate[n], kNoVertex);
  }
}

// φ enters a state the static solver left (the spanning blossom holding the offset), as a
// pool's arrival toggles it in; then pairs are broken, φ's among them, and repaired.
TEST(PhantomSearch, EntersASolvedStateAndRepairsBrokenPairs) {
  for (std::uint64_t seed = 100; seed < 160; ++seed) {
    const std::size_t n = 5 + 2 * (seed % 15);
    const Case c = make_case(n, n / 2 + seed % 7, 0, 3 + seed % 5, seed);
    MatchingState state(n + 1);
    solve_from_scratch(c.implicit, c.offset, state);
    PhantomPrices prices = joined_prices(c, state);
    enter_phantom(c, state, prices);
    run_roots(c, state, prices);
    SCOPED_TRACE(seed);
    expect_certified(c, state);
    // Break pairs of plain top-level vertices: both ends keep their prices, so every edge stays
    // feasible and they are roots.
    std::mt19937_64 rng(seed);
    for (int round = 0; round < 4; ++round) {
      for (Vertex v = 0; v <= n; ++v) {
        const Vertex m = state.mate[v];
        if (m == kNoVertex || m < v || state.forest.parent(v) != kNoNode ||
            state.forest.parent(m) != kNoNode || (rng() % 3 != 0 && v != n && m != n)) {
          continue;
        }
        state.mate.set(v, kNoVertex);
        state.mate.set(m, kNoVertex);
      }
      run_roots(c, state, prices);
      expect_certified(c, state);
    }
  }
}

TEST(PhantomPrices, LeastSkipsLeftAndRisenVertices) {
  PhantomPrices prices;
  prices.resize(4);
  std::vector<Weight> price = {5, 3, 8, 1};
  for (Vertex v = 0; v < 4; ++v) prices.join(v, price[v]);
  prices.leave(3);
  price[1] = 9;  // rose: its entry is stale low
  auto least = [&] {
    return prices.least([&](Vertex v) { return price[v]; }, [](Vertex) { return false; });
  };
  EXPECT_EQ(least().vertex, 0u);
  price[2] = 2;  // fell: offered
  prices.offer(2, 2);
  EXPECT_EQ(least().vertex, 2u);
  EXPECT_EQ(least().price2, 2);
}

}  // namespace
}  // namespace yoke
