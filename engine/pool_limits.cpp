#include <algorithm>
#include <string>

#include "pool_state.h"

namespace yoke {

Weight resolve_limits(Mode mode, PoolLimits& limits) {
  if (limits.max_vertices < 2 || limits.max_vertices >= kMaxVertices) {
    throw InputError("max_vertices = " + std::to_string(limits.max_vertices) +
                     " must be at least 2 and below 2^30");
  }
  if (limits.max_edges < 1 || limits.max_edges >= kMaxEdges) {
    throw InputError("max_edges = " + std::to_string(limits.max_edges) +
                     " must be at least 1 and below 2^30");
  }
  const auto pairs_bound = static_cast<Weight>(limits.max_vertices / 2);
  // max-weight: |w| <= 2^52 keeps the doubled duals exact; pairs x |w| <= 2^61 keeps the
  // objective in int64. The other modes add an offset that makes one more pair outweigh any
  // weight difference: offset = pairs x 2W + W + 1, and offset + W must stay within 2^52.
  const Weight allowed = mode == Mode::max_weight
                             ? std::min(kMaxAbsWeight, kMaxTotalWeight / pairs_bound)
                             : (kMaxAbsWeight - 1) / (2 * pairs_bound + 2);
  if (limits.max_abs_weight == 0) limits.max_abs_weight = allowed;
  if (limits.max_abs_weight < 0 || limits.max_abs_weight > allowed) {
    throw InputError("max_abs_weight = " + std::to_string(limits.max_abs_weight) +
                     " exceeds what mode " + mode_name(mode) + " keeps exact with " +
                     std::to_string(limits.max_vertices) + " vertices: at most " +
                     std::to_string(allowed));
  }
  if (mode == Mode::max_weight) return 0;
  return pairs_bound * 2 * limits.max_abs_weight + limits.max_abs_weight + 1;
}

}  // namespace yoke
