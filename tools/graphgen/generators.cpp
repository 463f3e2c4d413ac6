#include "tools/graphgen/generators.h"

#include <algorithm>
#include <stdexcept>
#include <string>

#include "tools/graphgen/vardolune.h"
#include "tools/graphgen/pair_set.h"
#include "tools/graphgen/point_grid.h"
#include "tools/graphgen/rng.h"

namespace yoke::gen {
namespace {

// Independent streams drawn from one seed, so that e.g. changing how values are drawn does
// not move the points.
enum GraphRng : std::uint64_t { kPlaces = 1, kPlaces2, kValues, kValues2, kPairs, kWeights };

// Shared ride in Vardolune: each rider saves 500..1500 by sharing; arranging a shared ride
// costs a fixed overhead plus the detour, a quarter point per metre.
constexpr Weight kRiderSavingMin = 500;
constexpr Weight kRiderSavingMax = 1500;
constexpr Weight kSharedRideOverhead = 1000;
constexpr Weight kDetourMetresPerPoint = 4;

// Delivery: an order is worth 300..1500, a courier's fit (vehicle, rating) adds 0..200, and
// riding to the pickup costs a point per two metres.
constexpr Weight kOrderValueMin = 300;
constexpr Weight kOrderValueMax = 1500;
constexpr Weight kCourierFitMax = 200;
constexpr Weight kPickupMetresPerPoint = 2;

void check_range(Weight min_w, Weight max_w) {
  if (min_w > max_w) {
    throw std::invalid_argument("generator weight range is empty: min_w " +
                                std::to_string(min_w) + " > max_w " + std::to_string(max_w));
  }
}

std::size_t clamp_count(int wanted, std::size_t available) {
  return wanted <= 0 ? 0 : std::min(static_cast<std::size_t>(wanted), available);
}

// Whether v is among the k neighbours of u in the row-major table `nearest`.
bool listed(const std::vector<Vertex>& nearest, std::size_t k, Vertex u, Vertex v) {
  const auto row = nearest.begin() + static_cast<std::ptrdiff_t>(u * k);
  return std::find(row, row + static_cast<std::ptrdiff_t>(k), v) != row + static_cast<std::ptrdiff_t>(k);
}

}  // namespace

GeneratedGraph city(std::size_t vertex_count, int neighbours, std::uint64_t seed) {
  GeneratedGraph graph{"city", vertex_count, {}};
  const std::size_t n = vertex_count;
  const std::size_t k = clamp_count(neighbours, n == 0 ? 0 : n - 1);
  if (k == 0) return graph;

  Rng places(seed, kPlaces);
  const std::vector<Point> points = scatter(n, Crowd::riders, places);
  Rng values(seed, kValues);
  std::vector<Weight> saving(n);
  for (Weight& s : saving) s = values.between(kRiderSavingMin, kRiderSavingMax);

  // Row i holds the k nearest riders of rider i.
  const PointGrid grid(points);
  std::vector<Vertex> nearest(n * k);
  std::vector<Vertex> row;
  for (const Vertex i : grid.spatial_order()) {
    grid.nearest(points[i], k, i, row);
    std::copy(row.begin(), row.end(), nearest.begin() + static_cast<std::ptrdiff_t>(i) * k);
  }

  // The union of both directions, each pair once: {i, j} is emitted from i unless j also
  // lists i and j < i (then j emits it).
  graph.edges.reserve(n * k * 3 / 4);
  for (std::size_t i = 0; i < n; ++i) {
    const auto a = static_cast<Vertex>(i);
    for (std::size_t t = 0; t < k; ++t) {
      const Vertex b = nearest[i * k + t];
      if (b < a && listed(nearest, k, b, a)) continue;
      const Weight w = saving[a] + saving[b] - kSharedRideOverhead -
                       distance_m(points[a], points[b]) / kDetourMetresPerPoint;
      graph.edges.push_back({std::min(a, b), std::max(a, b), w});
    }
  }
  return graph;
}

GeneratedGraph sparse_random(std::size_t vertex_count, std::size_t edge_count, Weight min_w,
                             Weight max_w, std::uint64_t seed) {
  check_range(min_w, max_w);
  GeneratedGraph graph{"sparse_random", vertex_count, {}};
  const std::uint64_t n = vertex_count;
  const std::uint64_t all_pairs = n < 2 ? 0 : n * (n - 1) / 2;
  const std::uint64_t m = std::min<std::uint64_t>(edge_count, all_pairs);  // asks beyond K_n get K_n
  Rng pairs(seed, kPairs);
  Rng weights(seed, kWeights);
  graph.edges.reserve(m);

  if (2 * m > all_pairs) {
    // Dense: rejection would stall, so shuffle the first m of all pairs (memory O(m) here).
    std::vector<Edge> every;
    every.reserve(all_pairs);
    for (Vertex a = 0; a < n; ++a) {
      for (Vertex b = a + 1; b < n; ++b) every.push_back({a, b, 0});
    }
    for (std::uint64_t i = 0; i < m; ++i) {
      std::swap(every[i], every[i + pairs.below(all_pairs - i)]);
      every[i].w = weights.between(min_w, max_w);
    }
    every.resize(m);
    graph.edges = std::move(every);
    return graph;
  }

  PairSet seen(m);
  while (graph.edges.size() < m) {
    const auto a = static_cast<Vertex>(pairs.below(n));
    auto b = static_cast<Vertex>(pairs.below(n - 1));
    if (b >= a) ++b;  // uniform over the other n - 1 vertices: never a self loop
    if (!seen.insert(a, b)) continue;
    graph.edges.push_back({a, b, weights.between(min_w, max_w)});
  }
  return graph;
}

GeneratedGraph dispatch_bipartite(std::size_t couriers, std::size_t orders, int per_order,
                                  std::uint64_t seed) {
  GeneratedGraph graph{"dispatch_bipartite", couriers + orders, {}};
  const std::size_t k = clamp_count(per_order, couriers);
  if (k == 0 || orders == 0) return graph;

  Rng courier_places(seed, kPlaces);
  const std::vector<Point> courier_at = scatter(couriers, Crowd::couriers, courier_places);
  Rng order_places(seed, kPlaces2);
  const std::vector<Point> order_at = scatter(orders, Crowd::orders, order_places);
  Rng fits(seed, kValues);
  std::vector<Weight> fit(couriers);
  for (Weight& f : fit) f = fits.between(0, kCourierFitMax);
  Rng values(seed, kValues2);
  std::vector<Weight> value(orders);
  for (Weight& v : value) v = values.between(kOrderValueMin, kOrderValueMax);

  // Row o holds the k nearest couriers of order o; queried in map order for speed.
  const PointGrid grid(courier_at);
  std::vector<Vertex> nearest(orders * k);
  std::vector<Vertex> row;
  const PointGrid order_grid(order_at);  // only for its spatial order
  for (const Vertex o : order_grid.spatial_order()) {
    grid.nearest(order_at[o], k, kNoVertex, row);
    std::copy(row.begin(), row.end(), nearest.begin() + static_cast<std::ptrdiff_t>(o) * k);
  }

  graph.edges.reserve(orders * k);
  for (std::size_t o = 0; o < orders; ++o) {
    const auto order = static_cast<Vertex>(couriers + o);
    for (std::size_t t = 0; t < k; ++t) {
      const Vertex c = nearest[o * k + t];
      const Weight w =
          value[o] + fit[c] - distance_m(courier_at[c], order_at[o]) / kPickupMetresPerPoint;
      graph.edges.push_back({c, order, w});
    }
  }
  return graph;
}

GeneratedGraph complete(std::size_t vertex_count, Weight min_w, Weight max_w, std::uint64_t seed) {
  check_range(min_w, max_w);
  GeneratedGraph graph{"complete", vertex_count, {}};
  const std::size_t n = vertex_count;
  Rng weights(seed, kWeights);
  graph.edges.reserve(n < 2 ? 0 : n * (n - 1) / 2);
  for (Vertex a = 0; a < n; ++a) {
    for (Vertex b = a + 1; b < n; ++b) graph.edges.push_back({a, b, weights.between(min_w, max_w)});
  }
  return graph;
}

}  // namespace yoke::gen
