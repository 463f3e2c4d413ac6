#include <algorithm>
#include <string>

#include "pool/pool_state.h"

namespace yoke {

Weight resolve_limits(Mode mode, PoolLimits& limits, Weight churn_bonus) {
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
  // The churn bonus rides on top of a standing pair's weight, so it takes room from the bound.
  if (churn_bonus < 0 || churn_bonus >= allowed) {
    throw InputError("churn_bonus = " + std::to_string(churn_bonus) + " must be at least 0 and below " +
                     std::to_string(allowed) + " for mode " + mode_name(mode) + " with " +
                     std::to_string(limits.max_vertices) + " vertices");
  }
  if (limits.max_abs_weight == 0) limits.max_abs_weight = allowed - churn_bonus;
  if (limits.max_abs_weight < 0 || limits.max_abs_weight > allowed - churn_bonus) {
    throw InputError("max_abs_weight = " + std::to_string(limits.max_abs_weight) +
                     " exceeds what mode " + mode_name(mode) + " keeps exact with " +
                     std::to_string(limits.max_vertices) + " vertices" +
                     (churn_bonus != 0 ? " and churn_bonus " + std::to_string(churn_bonus) : "") +
                     ": at most " + std::to_string(allowed - churn_bonus));
  }
  if (mode == Mode::max_weight) return 0;
  const Weight largest = limits.max_abs_weight + churn_bonus;  // of any weight in the graph
  return pairs_bound * 2 * largest + largest + 1;
}

}  // namespace yoke
