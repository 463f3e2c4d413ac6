#include "recovery.h"

#include <algorithm>
#include <memory>
#include <utility>

#include "commit_groups.h"
#include "snapshot_capture.h"
#include "wire_types.h"

namespace yoke::daemon {
namespace {

std::unique_ptr<Pool> pool_from_record(const v1::JournalRecord& first) {
  std::unique_ptr<Pool> pool = first.has_created() ? make_pool(first.created()) : nullptr;
  if (!pool) {
    throw RecoveryError("journal record 1 of pool " + first.pool() +
                        " does not say how the pool was created");
  }
  return pool;
}

// Loads one snapshot into `state` (only the record of `only_pool` when it is not empty), or
// throws SnapshotDamage (state untouched then): also when it holds no record of `only_pool`.
void load_snapshot(const storage::SnapshotContents& contents, const std::string& only_pool,
                   ServiceState& state) {
  std::vector<std::pair<const v1::SnapshotRecord*, std::unique_ptr<Pool>>> pools;
  for (const v1::SnapshotRecord& record : contents.pools) {
    if (!only_pool.empty() && record.pool() != only_pool) continue;
    pools.emplace_back(&record, restore_checked(record));
  }
  if (!only_pool.empty() && pools.empty()) {
    throw SnapshotDamage("the snapshot at " + std::to_string(contents.position) +
                         " holds no pool " + only_pool);
  }
  for (auto& [record, pool] : pools) {
    state.registry.put(record->pool(), std::move(pool));
    PoolProgress& progress = state.progress[record->pool()];
    progress.seq = record->seq();
    progress.last_snapshot_seq = record->seq();
    // The snapshot covers the log below its position.
    progress.last_position = contents.position > 0 ? contents.position - 1 : 0;
    for (const v1::ClientMark& mark : record->clients()) {
      state.ledger.restore(record->pool(), mark.client_id(),
                           retry_mark_from_snapshot(mark, record->wall_time_unix_us()));
    }
  }
}

// Loads the newest snapshot of the store that restores, whose position the log still holds
// groups from, and (when `pool` is not empty) that holds `pool`. Returns its position, 0 when
// none qualifies; why newer ones were passed over goes to report.skipped.
storage::Position load_newest_snapshot(const storage::CommitLogView& log,
                                       const storage::SnapshotStore& snapshots,
                                       const std::string& pool, ServiceState& state,
                                       RecoveryReport& report) {
  for (const storage::Position candidate : snapshots.positions()) {
    try {
      if (log.first_position(pool) > candidate) {
        throw SnapshotDamage("the journal no longer holds the records after it");
      }
      load_snapshot(snapshots.read(candidate), pool, state);
      report.snapshot_position = candidate;
      return candidate;
    } catch (const SnapshotDamage& damage) {
      report.skipped.push_back(damage.what());
    } catch (const storage::LogError& error) {
      report.skipped.push_back(error.what());
    }
  }
  return 0;
}

// Applies every group the log holds from `from` on (of `pool` only when it is not empty).
// From position 1 at least: a log whose first groups were dropped cannot stand for the whole
// history, and read_from says which are missing.
void apply_groups_from(storage::CommitLogView& log, storage::Position from,
                       const std::string& pool, ServiceState& state, RecoveryReport& report) {
  const std::unique_ptr<storage::GroupReader> reader =
      log.read_from(std::max<storage::Position>(from, 1), pool);
  while (auto group = reader->next()) {
    report.records += group->records.size();
    if (apply_commit_group(to_commit_group(std::move(*group)), state)) ++report.commits;
  }
  report.groups_not_counted += reader->skipped();
}

// Runs `step`, turning the errors of reading and replaying into RecoveryError.
template <typename Step>
void as_recovery(Step&& step) {
  try {
    step();
  } catch (const InputError& error) {
    throw RecoveryError(error.what());
  } catch (const storage::LogError& error) {
    throw RecoveryError(error.what());
  }
}

}  // namespace

std::optional<CommitResult> apply_commit_group(const CommitGroup& group, ServiceState& state) {
  PoolProgress& progress = state.progress[group.pool];
  const auto fail = [&group](const std::string& why) {
    return RecoveryError("journal window " + std::to_string(group.position) + ", pool " +
                         group.pool + ": " + why);
  };
  const std::uint64_t first_seq = group.records.front().seq();
  if (group.records.back().seq() <= progress.seq) return std::nullopt;  // the state holds it already
  if (first_seq != progress.seq + 1) {
    throw fail("record seq " + std::to_string(first_seq) + " does not follow seq " +
               std::to_string(progress.seq));
  }
  for (std::size_t i = 0; i < group.records.size(); ++i) {
    if (group.records[i].seq() != first_seq + i) throw fail("sequence numbers have a gap");
    if (group.records[i].retired() && i + 1 != group.records.size()) {
      throw fail("the retirement at seq " + std::to_string(group.records[i].seq()) +
                 " does not end its window");
    }
  }
  Pool* pool = state.registry.find(group.pool);
  if (group.records.back().retired()) {
    // The pool ends here, as PoolService::apply() ended it: the window's earlier batches
    // (checked when they were accepted) change nothing that stays.
    if (pool == nullptr && first_seq != 1) throw fail("the pool's earlier records are missing");
    take_pool_state(state, group.pool);
    return CommitResult{};
  }
  if (pool == nullptr) {
    if (first_seq != 1) throw fail("the pool's earlier records are missing");
    state.registry.put(group.pool, pool_from_record(group.records.front()));
    pool = state.registry.find(group.pool);
  }
  if (auto error = pool->check(group.events)) {
    throw fail("event " + std::to_string(error->index) + " does not apply: " + error->message);
  }
  const CommitResult result = pool->commit(group.events);
  progress.record_commit(result, group.records.back().seq(), group.records.size());
  progress.last_position = group.position;
  for (const v1::JournalRecord& record : group.records) {
    if (!record.client_id().empty()) {
      state.ledger.record(group.pool, record.client_id(), {record.client_batch(), record.seq()});
    }
  }
  // As the service did when it sealed this window: the same seqs, the same wall time.
  state.ledger.close_group(group.pool, first_seq, group.records.back().wall_time_unix_us());
  return result;
}

ServiceState empty_service_state(const DaemonConfig& config) {
  return ServiceState{PoolRegistry(config.pool_defaults, config.pools), {},
                      RetryLedger(config.ledger)};
}

ServiceState recover(const DaemonConfig& config, storage::CommitLog& log,
                     const storage::SnapshotStore& snapshots, RecoveryReport& report) {
  ServiceState state = empty_service_state(config);
  storage::Position position = 0;  // log groups below this one are in the snapshot
  as_recovery([&] {
    position = load_newest_snapshot(log, snapshots, "", state, report);
    apply_groups_from(log, position, "", state, report);
  });
  log.continue_from(std::max<storage::Position>(position, 1));
  report.pools = state.registry.size();
  return state;
}

void recover_pool(storage::CommitLogView& log, const storage::SnapshotStore& snapshots,
                  const std::string& pool, ServiceState& state, RecoveryReport& report) {
  take_pool_state(state, pool);
  as_recovery([&] {
    const storage::Position position = load_newest_snapshot(log, snapshots, pool, state, report);
    apply_groups_from(log, position, pool, state, report);
  });
  report.pools = state.registry.find(pool) != nullptr ? 1 : 0;
}

std::uint64_t catch_up_pool(storage::CommitLogView& log, const std::string& pool,
                            ServiceState& state, RecoveryReport& report) {
  const auto progress = state.progress.find(pool);
  const storage::Position from =
      progress == state.progress.end() ? 1 : progress->second.last_position + 1;
  const std::uint64_t commits_before = report.commits;
  as_recovery([&] { apply_groups_from(log, from, pool, state, report); });
  return report.commits - commits_before;
}

}  // namespace yoke::daemon
