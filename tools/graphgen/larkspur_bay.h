// The map of Larkspur Bay, the invented harbour city every geometric family is set in: a
// 20 km x 20 km square with the bay's water in the south-west corner, a few dense districts
// and a sparse background. Coordinates are whole metres.
#pragma once

#include <cstdint>
#include <vector>

#include "tools/graphgen/rng.h"

namespace yoke::gen {

struct Point {
  std::int32_t x = 0;
  std::int32_t y = 0;
};

inline constexpr std::int32_t kBayExtent = 20000;  // metres; points lie in [0, kBayExtent]^2

// Who is being placed: each crowd favours different districts.
enum class Crowd {
  riders,    // people asking to share a ride: the busy districts, many in the background
  couriers,  // spread over the whole city, a little denser where the work is
  orders,    // restaurants and shops: Old Quay, Lantern Row, Tanner's Hill, Eastgate
};

// `count` points on land, deterministic in `rng`'s stream.
std::vector<Point> scatter(std::size_t count, Crowd crowd, Rng& rng);

std::int64_t squared_distance(Point a, Point b);

// Whole metres between a and b, rounded down (exact integer square root, so the same on
// every machine).
std::int64_t distance_m(Point a, Point b);

}  // namespace yoke::gen
