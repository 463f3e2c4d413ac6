#include "commit_printer.h"

namespace yoke::postmortem {

bool CommitPrinter::committed(const Pool& pool, const CommitStep& step) {
  const CommitResult& result = step.result;
  out_ << "commit " << step.index << " weight " << result.weight << " pairs " << result.pairs
       << " repair_us " << step.repair_ns / 1000;
  if (step.commit.seq) out_ << " seq " << *step.commit.seq;
  out_ << '\n';
  if (result.status == SolveStatus::no_perfect_matching) {
    out_ << "note: commit " << step.index << ": no perfect matching (" << result.pairs
         << " pairs for " << pool.vertex_count() << " vertices)\n";
  }
  if (diffs_) {
    for (const MatchedPair& pair : result.diff.removed) {
      out_ << "- " << pair.a << ' ' << pair.b << '\n';
    }
    for (const MatchedPair& pair : result.diff.added) {
      out_ << "+ " << pair.a << ' ' << pair.b << '\n';
    }
  }
  return true;
}

}  // namespace yoke::postmortem
