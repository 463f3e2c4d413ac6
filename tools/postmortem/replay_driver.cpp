#include "replay_driver.h"

#include <chrono>

#include "replay_error.h"

namespace yoke::postmortem {

ReplayOutcome replay(CommitSource& source, Pool& pool, std::span<CommitObserver* const> observers) {
  ReplayOutcome outcome;
  outcome.at = source.start_point();
  for (CommitObserver* observer : observers) {
    observer->started(pool, outcome.at, source.from_snapshot());
  }
  while (const ReplayedCommit* commit = source.next()) {
    if (const auto rejected = pool.check(commit->events)) {
      throw ReplayError(source.refusal(*commit, *rejected));
    }
    const auto start = std::chrono::steady_clock::now();
    const CommitResult result = pool.commit(commit->events);
    const auto repair_ns =
        static_cast<std::uint64_t>(std::chrono::duration_cast<std::chrono::nanoseconds>(
                                       std::chrono::steady_clock::now() - start)
                                       .count());
    ++outcome.commits;
    outcome.at = commit->at;
    const CommitStep step{outcome.commits, *commit, result, repair_ns};
    for (CommitObserver* observer : observers) {
      if (!observer->committed(pool, step)) {
        outcome.completed = false;
        return outcome;
      }
    }
  }
  for (CommitObserver* observer : observers) observer->finished(pool, outcome.at);
  return outcome;
}

}  // namespace yoke::postmortem
