// What watches a replay (replay_driver.h): the commit printer, the verifier, the stats, the
// histories, and in the CLI the report page and the progress bar. Each is told of the start,
// of every commit in order, and of the end; none changes the pool.
#pragma once

#include <cstdint>

#include "commit_source.h"
#include "yoke/pool.h"

namespace yoke::postmortem {

// One commit as the driver made it.
struct CommitStep {
  std::uint64_t index = 0;  // 1 for the first commit of this replay
  const ReplayedCommit& commit;
  const CommitResult& result;
  std::uint64_t repair_ns = 0;  // Pool::commit alone (not the check, not the observers)
};

class CommitObserver {
 public:
  virtual ~CommitObserver() = default;
  // The pool before the first commit, at its point (0: empty; else the snapshot's seq).
  virtual void started(const Pool& pool, std::uint64_t at, bool from_snapshot) {
    (void)pool, (void)at, (void)from_snapshot;
  }
  // After each commit, `pool` holding its result. False stops the replay there: later
  // observers of this commit and finished() are not called (a verifier that found a failure).
  virtual bool committed(const Pool& pool, const CommitStep& step) {
    (void)pool, (void)step;
    return true;
  }
  // After the last commit replayed, at its point (the start's when there was none).
  virtual void finished(const Pool& pool, std::uint64_t at) { (void)pool, (void)at; }
};

}  // namespace yoke::postmortem
