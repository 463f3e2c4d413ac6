// The replay loop, the one every postmortem runs (`yoke replay` and its --verify, --stats,
// --diffs, --report, --history, --explain): take a source's commits in order, check each
// against the pool (a refusal stops the replay with the source's message), commit it, time the
// commit, and tell the observers. Sources: commit_source.h; observers: commit_observer.h.
#pragma once

#include <cstdint>
#include <span>

#include "commit_observer.h"
#include "commit_source.h"
#include "yoke/pool.h"

namespace yoke::postmortem {

struct ReplayOutcome {
  bool completed = true;  // false: an observer stopped the replay
  std::uint64_t commits = 0;
  std::uint64_t at = 0;  // the point of the last commit replayed (the start's when none)
};

// Replays `source` into `pool` (the pool its start() returned; call that first), telling
// `observers` in their order. Throws ReplayError for a commit the pool refuses (nothing of it
// applied) or a source that breaks its rules, after the commits before it. Cost: the source's
// reading plus the pool's commits plus the observers'.
ReplayOutcome replay(CommitSource& source, Pool& pool, std::span<CommitObserver* const> observers);

}  // namespace yoke::postmortem
