// The rule a pool's commit groups follow in the log, checked wherever a log is replayed
// (recovery, `yoke replay DATA_DIR`): a pool's seqs run 1, 2, 3... without a gap, each window
// continues the one before, and a retirement ends its window (after it the pool may start
// again at seq 1).
#pragma once

#include <cstdint>

#include "commit_groups.h"

namespace yoke::daemon {

// What to do with the next group of a pool.
enum class GroupStep {
  held,    // every record of it is at or below the pool's seq: the state holds it already
  commit,  // it continues the pool: commit its events
  retire,  // it continues the pool and ends it (its last record is a retirement)
};

// Checks `group` against the pool's history so far: `last_seq` is the seq of the last record
// applied (0 for none) and `pool_exists` whether the pool has state (a group that does not
// start at seq 1 needs one). Throws RecoveryError naming the group's position, the pool and
// the missing seq when the group does not continue the pool, or a retirement that does not
// end its window. O(records of the group).
GroupStep place_group(const CommitGroup& group, std::uint64_t last_seq, bool pool_exists);

}  // namespace yoke::daemon
