// The commit lines of `yoke replay` (docs/contracts.md §3), as an observer of the replay:
//
//     commit I weight W pairs K repair_us T [seq S]
//
// (` seq S` for a log's commits), then `note: commit I: no perfect matching (K pairs for N
// vertices)` when the commit found none (perfect mode), then with diffs one `- A B` per
// removed pair and one `+ A B` per added pair (A < B, sorted).
#pragma once

#include <ostream>

#include "commit_observer.h"

namespace yoke::postmortem {

class CommitPrinter : public CommitObserver {
 public:
  CommitPrinter(std::ostream& out, bool diffs) : out_(out), diffs_(diffs) {}
  bool committed(const Pool& pool, const CommitStep& step) override;

 private:
  std::ostream& out_;
  bool diffs_;
};

}  // namespace yoke::postmortem
