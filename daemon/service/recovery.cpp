#include "recovery.h"

#include <algorithm>
#include <memory>
#include <utility>

#include "daemon/recovery/group_sequence.h"
#include "daemon/recovery/snapshot_choice.h"
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

// Loads the newest snapshot of the store that restores, whose position the log still holds
// groups from, and (when `pool` is not empty) that holds `pool` (choose_snapshot, the choice
// `yoke replay` makes too). Returns its position, 0 when none qualifies; why newer ones were
// passed over goes to report.skipped.
storage::Position load_newest_snapshot(const storage::CommitLogView& log,
                                       const storage::SnapshotStore& snapshots,
                                       const std::string& pool, ServiceState& state,
                                       RecoveryReport& report) {
  std::vector<SkippedSnapshot> skipped;
  std::optional<ChosenSnapshot> chosen =
      choose_snapshot(log, snapshots, {pool, {}, false}, skipped);
  for (SkippedSnapshot& skip : skipped) report.skipped.push_back(std::move(skip.why));
  if (!chosen) return 0;
  for (RestoredPool& restored : chosen->pools) {
    const v1::SnapshotRecord& record = restored.record;
    state.registry.put(record.pool(), std::move(restored.pool));
    PoolProgress& progress = state.progress[record.pool()];
    progress.seq = record.seq();
    progress.last_snapshot_seq = record.seq();
    progress.incarnation = record.incarnation();
    // The snapshot covers the log below its position.
    progress.last_position = chosen->position > 0 ? chosen->position - 1 : 0;
    for (const v1::ClientMark& mark : record.clients()) {
      state.ledger.restore(record.pool(), mark.client_id(),
                           retry_mark_from_snapshot(mark, record.wall_time_unix_us()));
    }
  }
  report.snapshot_position = chosen->position;
  return chosen->position;
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
  Pool* pool = state.registry.find(group.pool);
  const GroupStep step = place_group(group, progress.seq, pool != nullptr);
  if (step == GroupStep::held) return std::nullopt;  // the state holds it already
  if (step == GroupStep::retire) {
    // The pool ends here, as PoolService::apply() ended it: the window's earlier batches
    // (checked when they were accepted) change nothing that stays.
    take_pool_state(state, group.pool);
    return CommitResult{};
  }
  if (pool == nullptr) {
    state.registry.put(group.pool, pool_from_record(group.records.front()));
    pool = state.registry.find(group.pool);
  }
  const auto fail = [&group](const std::string& why) {
    return RecoveryError("journal window " + std::to_string(group.position) + ", pool " +
                         group.pool + ": " + why);
  };
  const std::uint64_t first_seq = group.records.front().seq();
  if (auto error = pool->check(group.events)) {
    throw fail("event " + std::to_string(error->index) + " does not apply: " + error->message);
  }
  const CommitResult result = pool->commit(group.events);
  progress.record_commit(result, group.records.back().seq(), group.records.size());
  progress.last_position = group.position;
  if (first_seq == 1) progress.incarnation = group.position;  // as PoolService::end_seal()
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
