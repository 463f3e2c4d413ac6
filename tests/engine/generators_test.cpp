// The seeded graph families: deterministic, simple graphs (no loops, no duplicates), the sizes
// asked for, and nearest neighbours that really are the nearest.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <set>
#include <sstream>
#include <utility>
#include <vector>

#include "tools/formats/edge_list_writer.h"
#include "tools/graphgen/generators.h"
#include "tools/graphgen/point_grid.h"
#include "tools/graphgen/rng.h"
#include "tools/graphgen/vardolune.h"

namespace yoke::gen {
namespace {

// Every endpoint in range, no self loop, no pair twice in either orientation.
void expect_simple(const GeneratedGraph& g) {
  std::set<std::pair<Vertex, Vertex>> pairs;
  for (const Edge& e : g.edges) {
    ASSERT_LT(e.a, g.vertex_count);
    ASSERT_LT(e.b, g.vertex_count);
    ASSERT_NE(e.a, e.b) << "self loop at " << e.a;
    ASSERT_TRUE(pairs.insert({std::min(e.a, e.b), std::max(e.a, e.b)}).second)
        << "duplicate edge " << e.a << " " << e.b;
  }
}

bool same_edges(const GeneratedGraph& x, const GeneratedGraph& y) {
  return x.vertex_count == y.vertex_count && x.edges.size() == y.edges.size() &&
         std::equal(x.edges.begin(), x.edges.end(), y.edges.begin(),
                    [](const Edge& p, const Edge& q) { return p.a == q.a && p.b == q.b && p.w == q.w; });
}

// FNV-1a over (a, b, w) in edge order: fixes the exact output across machines and libraries.
std::uint64_t fingerprint(const GeneratedGraph& g) {
  std::uint64_t h = 0xcbf29ce484222325ULL;
  auto mix = [&h](std::uint64_t value) {
    for (int i = 0; i < 8; ++i) {
      h ^= (value >> (8 * i)) & 0xff;
      h *= 0x100000001b3ULL;
    }
  };
  for (const Edge& e : g.edges) {
    mix(e.a);
    mix(e.b);
    mix(static_cast<std::uint64_t>(e.w));
  }
  return h;
}

TEST(Rng, BoundedDrawsStayInRange) {
  Rng rng(42);
  for (int i = 0; i < 10000; ++i) {
    ASSERT_LT(rng.below(7), 7u);
    const auto x = rng.between(-3, 3);
    ASSERT_GE(x, -3);
    ASSERT_LE(x, 3);
    const double u = rng.unit();
    ASSERT_GE(u, 0.0);
    ASSERT_LT(u, 1.0);
  }
  EXPECT_EQ(Rng(5).between(9, 9), 9);
}

TEST(Generators, SameSeedSameGraphOtherSeedOtherGraph) {
  EXPECT_TRUE(same_edges(city(2000, 10, 1), city(2000, 10, 1)));
  EXPECT_FALSE(same_edges(city(2000, 10, 1), city(2000, 10, 2)));
  EXPECT_TRUE(same_edges(sparse_random(1000, 5000, 1, 100, 3), sparse_random(1000, 5000, 1, 100, 3)));
  EXPECT_FALSE(same_edges(sparse_random(1000, 5000, 1, 100, 3), sparse_random(1000, 5000, 1, 100, 4)));
  EXPECT_TRUE(same_edges(dispatch_bipartite(300, 400, 6, 5), dispatch_bipartite(300, 400, 6, 5)));
  EXPECT_FALSE(same_edges(dispatch_bipartite(300, 400, 6, 5), dispatch_bipartite(300, 400, 6, 6)));
  EXPECT_TRUE(same_edges(complete(60, -5, 5, 7), complete(60, -5, 5, 7)));
  EXPECT_FALSE(same_edges(complete(60, -5, 5, 7), complete(60, -5, 5, 8)));
  EXPECT_TRUE(same_edges(blossom_stress(3000, 9), blossom_stress(3000, 9)));
  EXPECT_FALSE(same_edges(blossom_stress(3000, 9), blossom_stress(3000, 10)));
}

// Golden values: if one of these changes, every machine's benchmark and test inputs changed
// with it. Update deliberately, never to make a test pass.
TEST(Generators, OutputIsFixedByItsFingerprint) {
  EXPECT_EQ(fingerprint(city(3000, 10, 1)), 5307933496286825300ULL);
  EXPECT_EQ(fingerprint(sparse_random(2000, 8000, 1, 1000000, 1)), 713477251379010378ULL);
  EXPECT_EQ(fingerprint(dispatch_bipartite(500, 500, 10, 1)), 5127592059097710987ULL);
  EXPECT_EQ(fingerprint(complete(40, -10, 10, 1)), 3085062625864408196ULL);
  EXPECT_EQ(fingerprint(blossom_stress(2000, 1)), 6524468545325045534ULL);
}

TEST(Generators, CityIsSimpleAndNearestNeighbourSized) {
  const int k = 10;
  const GeneratedGraph g = city(5000, k, 11);
  EXPECT_EQ(g.family, "city");
  EXPECT_EQ(g.vertex_count, 5000u);
  expect_simple(g);
  // The union of both directions: at least n*k/2 pairs (all mutual), at most n*k.
  EXPECT_GE(g.edges.size(), 5000u * k / 2);
  EXPECT_LE(g.edges.size(), 5000u * k);
  std::vector<int> degree(g.vertex_count, 0);
  for (const Edge& e : g.edges) {
    ++degree[e.a];
    ++degree[e.b];
  }
  EXPECT_GE(*std::min_element(degree.begin(), degree.end()), k);
  // Realistic weights: mostly worth pairing, some not, and plenty of exact ties.
  const auto positive = std::count_if(g.edges.begin(), g.edges.end(), [](const Edge& e) { return e.w > 0; });
  EXPECT_GT(positive, static_cast<long>(g.edges.size() * 9 / 10));
  EXPECT_LT(positive, static_cast<long>(g.edges.size()));
  std::set<Weight> distinct;
  for (const Edge& e : g.edges) distinct.insert(e.w);
  EXPECT_LT(distinct.size(), g.edges.size() / 4);
}

TEST(Generators, CityHandlesTinyInputs) {
  EXPECT_TRUE(city(0, 10, 1).edges.empty());
  EXPECT_TRUE(city(1, 10, 1).edges.empty());
  EXPECT_EQ(city(2, 10, 1).edges.size(), 1u);
  const GeneratedGraph five = city(5, 10, 1);  // asks for more neighbours than exist: K5
  EXPECT_EQ(five.edges.size(), 10u);
  expect_simple(five);
  EXPECT_TRUE(city(100, 0, 1).edges.empty());
}

TEST(Generators, SparseRandomHasExactlyTheEdgesAsked) {
  const GeneratedGraph g = sparse_random(3000, 20000, -50, 50, 2);
  EXPECT_EQ(g.vertex_count, 3000u);
  EXPECT_EQ(g.edges.size(), 20000u);
  expect_simple(g);
  for (const Edge& e : g.edges) {
    ASSERT_GE(e.w, -50);
    ASSERT_LE(e.w, 50);
  }
  // Dense requests take the shuffle path; more than all pairs gives the complete graph.
  const GeneratedGraph dense = sparse_random(30, 400, 1, 9, 2);
  EXPECT_EQ(dense.edges.size(), 400u);
  expect_simple(dense);
  EXPECT_EQ(sparse_random(30, 10000, 1, 9, 2).edges.size(), 435u);
  EXPECT_TRUE(sparse_random(1, 10, 1, 9, 2).edges.empty());
  EXPECT_THROW(sparse_random(10, 5, 9, 1, 2), std::invalid_argument);
}

TEST(Generators, DispatchIsBipartiteCouriersToOrders) {
  const std::size_t couriers = 800;
  const std::size_t orders = 1200;
  const GeneratedGraph g = dispatch_bipartite(couriers, orders, 7, 3);
  EXPECT_EQ(g.vertex_count, couriers + orders);
  EXPECT_EQ(g.edges.size(), orders * 7);
  expect_simple(g);
  for (const Edge& e : g.edges) {
    ASSERT_LT(e.a, couriers);
    ASSERT_GE(e.b, couriers);
  }
  EXPECT_EQ(dispatch_bipartite(3, 5, 10, 3).edges.size(), 15u);  // per_order capped by couriers
  EXPECT_TRUE(dispatch_bipartite(0, 5, 10, 3).edges.empty());
}

TEST(Generators, CompleteHasAllPairs) {
  const GeneratedGraph g = complete(101, 0, 3, 4);
  EXPECT_EQ(g.vertex_count, 101u);
  EXPECT_EQ(g.edges.size(), 101u * 100 / 2);
  expect_simple(g);
  EXPECT_TRUE(complete(1, 0, 3, 4).edges.empty());
}

TEST(Generators, BlossomStressMixesShapesAndSpecialWeights) {
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    const std::size_t n = 50 + 97 * seed;
    const GeneratedGraph g = blossom_stress(n, seed);
    EXPECT_EQ(g.vertex_count, n);
    expect_simple(g);
  }
  const GeneratedGraph g = blossom_stress(20000, 5);
  std::vector<int> degree(g.vertex_count, 0);
  for (const Edge& e : g.edges) {
    ++degree[e.a];
    ++degree[e.b];
  }
  EXPECT_GT(std::count(degree.begin(), degree.end(), 0), 0) << "no isolated vertex";
  EXPECT_GT(std::count_if(g.edges.begin(), g.edges.end(), [](const Edge& e) { return e.w == 0; }), 0);
  EXPECT_GT(std::count_if(g.edges.begin(), g.edges.end(), [](const Edge& e) { return e.w < 0; }), 0);
  EXPECT_GT(g.edges.size(), g.vertex_count);
  for (std::size_t n = 0; n < 12; ++n) EXPECT_EQ(blossom_stress(n, 3).vertex_count, n);
}

TEST(PointGrid, FindsTheTrueNearestNeighbours) {
  Rng rng(17);
  for (const std::size_t n : {1u, 2u, 13u, 400u, 3000u}) {
    const std::vector<Point> sites = scatter(n, Crowd::riders, rng);
    const PointGrid grid(sites);
    std::vector<Vertex> got;
    for (std::size_t q = 0; q < n; q += 7) {
      std::vector<std::pair<std::int64_t, Vertex>> all;
      for (std::size_t s = 0; s < n; ++s) {
        if (s != q) all.push_back({squared_distance(sites[q], sites[s]), static_cast<Vertex>(s)});
      }
      std::sort(all.begin(), all.end());
      const std::size_t k = std::min<std::size_t>(9, all.size());
      grid.nearest(sites[q], 9, static_cast<Vertex>(q), got);
      ASSERT_EQ(got.size(), k);
      for (std::size_t i = 0; i < k; ++i) ASSERT_EQ(got[i], all[i].second) << "n " << n << " q " << q;
    }
  }
}

TEST(Vardolune, PointsAreOnLandInsideTheMap) {
  Rng rng(3);
  for (const Point& p : scatter(20000, Crowd::orders, rng)) {
    ASSERT_GE(p.x, 0);
    ASSERT_GE(p.y, 0);
    ASSERT_LE(p.x, kMapExtent);
    ASSERT_LE(p.y, kMapExtent);
    ASSERT_GT(squared_distance(p, {3000, 0}), 3500LL * 3500) << "point in the lagoon";
  }
  EXPECT_EQ(distance_m({0, 0}, {3, 4}), 5);
  EXPECT_EQ(distance_m({0, 0}, {1, 1}), 1);
}

TEST(WriteEdgeList, WritesOneLinePerEdgeWithExternalIds) {
  GeneratedGraph g{"tiny", 3, {{0, 1, 7}, {2, 1, -4}}};
  std::ostringstream plain;
  formats::write_edge_list(plain, g.edges);
  EXPECT_EQ(plain.str(), "0 1 7\n2 1 -4\n");
  std::ostringstream mapped;
  const std::vector<std::uint64_t> ids{100, 18446744073709551615ULL, 5};
  formats::write_edge_list(mapped, g.edges, ids);
  EXPECT_EQ(mapped.str(), "100 18446744073709551615 7\n5 18446744073709551615 -4\n");
}

}  // namespace
}  // namespace yoke::gen
