#include "tools/bench/number_format.h"

#include <cstdio>

namespace yoke::bench {

std::string format(const char* pattern, double value) {
  char text[64];
  std::snprintf(text, sizeof text, pattern, value);
  return text;
}

std::string mib(std::size_t bytes) {
  return format("%.1f", static_cast<double>(bytes) / (1024.0 * 1024.0));
}

}  // namespace yoke::bench
