#include "tools/graphgen/vardolune.h"

#include <array>
#include <cmath>

namespace yoke::gen {
namespace {

struct District {
  const char* name;  // for the reader; the map is invented
  std::int64_t x;
  std::int64_t y;
  std::int64_t spread;  // metres, standard deviation of the (near-)gaussian crowd
};

constexpr std::array<District, 5> kDistricts = {{
    {"Orrivane", 5200, 4600, 650},
    {"Nuvessa", 1800, 9800, 1400},
    {"Pazzaret", 9600, 9000, 900},
    {"Ekkavan", 15800, 7400, 1100},
    {"Lanquivel", 11800, 14600, 550},
}};

// Share of each crowd per district in per mille, same order as kDistricts; the rest is
// background, uniform over the land.
constexpr std::array<std::uint64_t, 5> kRiderShare = {150, 80, 170, 140, 120};
constexpr std::array<std::uint64_t, 5> kCourierShare = {80, 60, 100, 100, 60};
constexpr std::array<std::uint64_t, 5> kOrderShare = {200, 40, 160, 160, 180};

// The lagoon: water inside this disc (centre on the south edge).
constexpr std::int64_t kLagoonX = 3000;
constexpr std::int64_t kLagoonRadius = 3500;

const std::array<std::uint64_t, 5>& shares(Crowd crowd) {
  switch (crowd) {
    case Crowd::riders: return kRiderShare;
    case Crowd::couriers: return kCourierShare;
    case Crowd::orders: return kOrderShare;
  }
  return kRiderShare;
}

// A near-gaussian offset of standard deviation `spread` metres: the Irwin-Hall sum of four
// uniforms, in integers only, so that no floating-point contraction or libm difference can
// move a point between machines.
std::int64_t near_gaussian(Rng& rng, std::int64_t spread) {
  std::int64_t sum = 0;
  for (int i = 0; i < 4; ++i) sum += static_cast<std::int64_t>(rng.next() >> 48);  // [0, 2^16)
  const std::int64_t centred = sum - 2 * 65536;  // sd = 65536 * sqrt(4/12) = 65536 / sqrt(3)
  return centred * spread * 17320508 / (65536LL * 10000000);  // x sqrt(3) / 65536
}

bool on_land(std::int64_t x, std::int64_t y) {
  if (x < 0 || y < 0 || x > kMapExtent || y > kMapExtent) return false;
  const std::int64_t dx = x - kLagoonX;
  return dx * dx + y * y > kLagoonRadius * kLagoonRadius;
}

Point draw_point(Crowd crowd, Rng& rng) {
  const auto& share = shares(crowd);
  std::uint64_t pick = rng.below(1000);
  const District* home = nullptr;
  for (std::size_t d = 0; d < kDistricts.size(); ++d) {
    if (pick < share[d]) {
      home = &kDistricts[d];
      break;
    }
    pick -= share[d];
  }
  for (;;) {  // redraw until on land: the lagoon and the map edge clip the crowds
    std::int64_t x;
    std::int64_t y;
    if (home != nullptr) {
      x = home->x + near_gaussian(rng, home->spread);
      y = home->y + near_gaussian(rng, home->spread);
    } else {
      x = static_cast<std::int64_t>(rng.below(kMapExtent + 1));
      y = static_cast<std::int64_t>(rng.below(kMapExtent + 1));
    }
    if (on_land(x, y)) return {static_cast<std::int32_t>(x), static_cast<std::int32_t>(y)};
  }
}

}  // namespace

std::vector<Point> scatter(std::size_t count, Crowd crowd, Rng& rng) {
  std::vector<Point> points(count);
  for (Point& p : points) p = draw_point(crowd, rng);
  return points;
}

std::int64_t squared_distance(Point a, Point b) {
  const std::int64_t dx = a.x - b.x;
  const std::int64_t dy = a.y - b.y;
  return dx * dx + dy * dy;
}

std::int64_t distance_m(Point a, Point b) {
  const std::int64_t d2 = squared_distance(a, b);
  // sqrt is correctly rounded (IEEE), the two loops make the floor exact anyway.
  auto r = static_cast<std::int64_t>(std::sqrt(static_cast<double>(d2)));
  while (r * r > d2) --r;
  while ((r + 1) * (r + 1) <= d2) ++r;
  return r;
}

}  // namespace yoke::gen
