// The matching a pool's export certifies, read by vertex key, for the checks that compare it
// with what the commits reported (`yoke replay --verify`, yoke_soak).
#pragma once

#include <utility>
#include <vector>

#include "yoke/pool.h"

namespace yoke::postmortem {

struct CertifiedMatching {
  std::vector<std::pair<VertexKey, VertexKey>> pairs;  // (a, b) with a < b, sorted
  Int128 weight = 0;  // 128 bits: the sum is the thing being checked, so it must not wrap
};

// The edges of `exported.graph` whose ends are mates in its certificate. Cost O(m log m).
CertifiedMatching certified_matching(const PoolExport& exported);

}  // namespace yoke::postmortem
