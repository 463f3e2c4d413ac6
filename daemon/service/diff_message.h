// The published diff of one commit: what changed in a pool's matching, built the same way by
// the serving daemon (PoolService::apply) and by a standby that replays the pool's log (whose
// diffs a takeover republishes).
#pragma once

#include <cstdint>
#include <string>

#include "yoke/pool.h"
#include "yoke/v1/publish.pb.h"

namespace yoke::daemon {

// The diff of `result`, the commit of a pool's batches prev_seq+1 .. seq. Timings carry
// repair_us only (the publisher adds the rest). Made in `diff`, an empty message (a
// DiffRecycler's holds pair messages, filled again instead of allocated). O(pairs changed).
v1::Diff diff_of_commit(const std::string& pool, const CommitResult& result, std::uint64_t seq,
                        std::uint64_t prev_seq, bool no_perfect_matching,
                        std::uint64_t repair_us, v1::Diff diff = v1::Diff());

// The last diff of a pool retired at `seq` (Diff.retired): every pair `pool` holds (its state
// at prev_seq) removed, weight and pairs 0. O(vertices).
v1::Diff diff_of_retirement(const std::string& name, const Pool& pool, std::uint64_t seq,
                            std::uint64_t prev_seq);

}  // namespace yoke::daemon
