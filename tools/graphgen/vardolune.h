// The map of Vardolune, the invented harbour city every geometric family is set in: a
// 20 km x 20 km square with the water of its lagoon in the south-west corner, five dense
// districts and a sparse background. Coordinates are whole metres. (The live demo in
// tools/demo is set in another invented city, Quillory, with a map of its own.)
#pragma once

#include <cstdint>
#include <vector>

#include "tools/graphgen/rng.h"

namespace yoke::gen {

struct Point {
  std::int32_t x = 0;
  std::int32_t y = 0;
};

inline constexpr std::int32_t kMapExtent = 20000;  // metres; points lie in [0, kMapExtent]^2

// Who is being placed: each crowd favours different districts.
enum class Crowd {
  riders,    // people asking to share a ride: the busy districts, many in the background
  couriers,  // spread over the whole city, a little denser where the work is
  orders,    // restaurants and shops: Orrivane, Lanquivel, Pazzaret, Ekkavan
};

// `count` points on land, deterministic in `rng`'s stream.
std::vector<Point> scatter(std::size_t count, Crowd crowd, Rng& rng);

std::int64_t squared_distance(Point a, Point b);

// Whole metres between a and b, rounded down (exact integer square root, so the same on
// every machine).
std::int64_t distance_m(Point a, Point b);

}  // namespace yoke::gen
