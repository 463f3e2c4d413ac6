#include "diff_message.h"

#include "wire_types.h"

namespace yoke::daemon {

v1::Diff diff_of_commit(const std::string& pool, const CommitResult& result, std::uint64_t seq,
                        std::uint64_t prev_seq, bool no_perfect_matching,
                        std::uint64_t repair_us, v1::Diff diff) {
  diff.set_pool(pool);
  diff.set_seq(seq);
  diff.set_prev_seq(prev_seq);
  // Set in place: add_*() hands back a pair message a recycled diff still holds.
  for (const MatchedPair& pair : result.diff.removed) write_wire(pair, *diff.add_removed());
  for (const MatchedPair& pair : result.diff.added) write_wire(pair, *diff.add_added());
  diff.set_weight(result.weight);
  diff.set_pairs(result.pairs);
  diff.set_no_perfect_matching(no_perfect_matching);
  diff.mutable_timings()->set_repair_us(repair_us);
  *diff.mutable_stats() = to_wire(result.stats);
  return diff;
}

v1::Diff diff_of_retirement(const std::string& name, const Pool& pool, std::uint64_t seq,
                            std::uint64_t prev_seq) {
  v1::Diff diff;
  diff.set_pool(name);
  diff.set_seq(seq);
  diff.set_prev_seq(prev_seq);
  for (const MatchedPair& pair : pool.matching()) write_wire(pair, *diff.add_removed());
  diff.set_retired(true);
  diff.mutable_timings();  // present, all zero: nothing was repaired
  diff.mutable_stats();
  return diff;
}

}  // namespace yoke::daemon
