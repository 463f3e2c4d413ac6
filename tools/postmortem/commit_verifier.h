// `yoke replay --verify` as an observer of the replay: after every commit the diffs so far
// must add up to the certificate's matching, the certificate must pass the independent
// checker, and the commit's reported pairs and weight must be the certificate's. The first
// commit that fails stops the replay; failure() then says which and why.
#pragma once

#include <optional>
#include <set>
#include <string>
#include <utility>

#include "commit_observer.h"

namespace yoke::postmortem {

class CommitVerifier : public CommitObserver {
 public:
  // From a snapshot, the later diffs apply to the restored matching.
  void started(const Pool& pool, std::uint64_t at, bool from_snapshot) override;
  // Cost: the pool's export and the certificate check, O(m log m) per commit.
  bool committed(const Pool& pool, const CommitStep& step) override;

  // "commit I: certificate check failed: why", once a commit failed.
  const std::optional<std::string>& failure() const { return failure_; }

 private:
  std::optional<std::string> check(const Pool& pool, const CommitResult& result);
  std::optional<std::string> apply_diff(const MatchingDiff& diff);

  std::set<std::pair<VertexKey, VertexKey>> matched_;  // the matching the diffs add up to
  std::optional<std::string> failure_;
};

}  // namespace yoke::postmortem
