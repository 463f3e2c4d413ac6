// The benchmark's instance sets: the default (sizes that matter in production) and --quick
// (a smoke test of every family that runs in seconds).
#pragma once

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "tools/graphgen/generators.h"

namespace yoke::bench {

struct Instance {
  std::string name;    // unique, e.g. "city-100k"; --only matches it or the family
  std::string family;  // generator family, e.g. "city"
  std::function<gen::GeneratedGraph()> make;
};

std::vector<Instance> default_instances(std::uint64_t seed);
std::vector<Instance> quick_instances(std::uint64_t seed);

}  // namespace yoke::bench
