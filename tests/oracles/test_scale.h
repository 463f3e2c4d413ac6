// Seed counts for oracle sweeps. The sanitizer build sets YOKE_TEST_SCALE=small (it runs
// about 5x slower), and the sweeps then run about a fifth of their cases.
#pragma once

#include <cstdlib>
#include <string_view>

namespace yoke::oracle {

inline bool small_scale() {
  const char* scale = std::getenv("YOKE_TEST_SCALE");
  return scale != nullptr && std::string_view(scale) == "small";
}

// `full` cases normally, about full / 5 (at least 1) in the small scale.
inline int scaled(int full) {
  if (!small_scale()) return full;
  return full / 5 > 0 ? full / 5 : 1;
}

}  // namespace yoke::oracle
