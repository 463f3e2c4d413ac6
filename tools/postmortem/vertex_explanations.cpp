#include "vertex_explanations.h"

namespace yoke::postmortem {

void VertexExplanations::finished(const Pool& pool, std::uint64_t) {
  answers_.clear();
  for (const VertexKey vertex : vertices_) {
    answers_.push_back({vertex, pool.explain(vertex, alternatives_)});
  }
}

}  // namespace yoke::postmortem
