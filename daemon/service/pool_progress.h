// What the daemon knows about each pool beyond the engine's state: its sequence number and its
// counters, for acknowledgements, queries and metrics.
#pragma once

#include <cstdint>

#include "yoke/pool.h"
#include "yoke/v1/publish.pb.h"

namespace yoke::daemon {

struct PoolProgress {
  std::uint64_t seq = 0;  // the last batch applied (0: none yet)
  std::uint64_t batches_accepted = 0;
  std::uint64_t batches_rejected = 0;
  std::uint64_t batches_duplicate = 0;
  std::uint64_t events_applied = 0;
  std::uint64_t commits = 0;
  bool no_perfect_matching = false;
  RepairStats last_repair;
  v1::Timings last_timings;
  std::uint64_t last_snapshot_seq = 0;
  // The commit log position through which this state is complete: the position of the last
  // group applied to the pool (apply_commit_group, PoolService::seal), or a loaded snapshot's
  // position - 1. A snapshot of this pool alone is named last_position + 1 (in cluster mode,
  // its snapshot subject), and following the pool reads the log from there.
  std::uint64_t last_position = 0;
  // The commit log position of the group holding the pool's first batch (seq 1): it tells this
  // pool from an earlier one of the same name, retired since (Diff.incarnation). Set once that
  // group is durable (0 before), by the service and by recovery alike; a snapshot keeps it
  // (0 from a snapshot written before it was kept).
  std::uint64_t incarnation = 0;

  // One commit of `batches` batches ending at `last_seq`, as the daemon and recovery both
  // count it.
  void record_commit(const CommitResult& result, std::uint64_t last_seq, std::uint64_t batches) {
    seq = last_seq;
    batches_accepted += batches;
    events_applied += result.stats.events;
    ++commits;
    no_perfect_matching = result.status == SolveStatus::no_perfect_matching;
    last_repair = result.stats;
  }
};

}  // namespace yoke::daemon
