// `yoke replay --explain V` as an observer of the replay: the explanation of each vertex asked
// about (Pool::explain: its pair, its price, its closest alternatives) in the state where the
// replay stops. The CLI words them (tools/cli/explanation_text.h) or writes their JSON.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <utility>
#include <vector>

#include "commit_observer.h"

namespace yoke::postmortem {

struct VertexAnswer {
  VertexKey vertex = 0;
  std::optional<VertexExplanation> explanation;  // nothing: not in the pool there
};

class VertexExplanations : public CommitObserver {
 public:
  // At most `alternatives` alternatives per vertex.
  VertexExplanations(std::vector<VertexKey> vertices, std::size_t alternatives)
      : vertices_(std::move(vertices)), alternatives_(alternatives) {}

  // Explains every vertex in the final state. O(vertices x their degrees).
  void finished(const Pool& pool, std::uint64_t at) override;

  // In the order asked (empty before the replay finished).
  const std::vector<VertexAnswer>& answers() const { return answers_; }

 private:
  std::vector<VertexKey> vertices_;
  std::size_t alternatives_;
  std::vector<VertexAnswer> answers_;
};

}  // namespace yoke::postmortem
