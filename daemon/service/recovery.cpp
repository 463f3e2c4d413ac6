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

// Loads one snapshot into `state`, or throws SnapshotDamage (state untouched then).
void load_snapshot(const storage::SnapshotContents& contents, ServiceState& state) {
  std::vector<std::pair<std::string, std::unique_ptr<Pool>>> pools;
  for (const v1::SnapshotRecord& record : contents.pools) {
    pools.emplace_back(record.pool(), restore_checked(record));
  }
  for (std::size_t i = 0; i < pools.size(); ++i) {
    const v1::SnapshotRecord& record = contents.pools[i];
    state.registry.put(pools[i].first, std::move(pools[i].second));
    PoolProgress& progress = state.progress[record.pool()];
    progress.seq = record.seq();
    progress.last_snapshot_seq = record.seq();
    for (const v1::ClientMark& mark : record.clients()) {
      state.ledger.record(record.pool(), mark.client_id(), {mark.last_batch(), mark.seq()});
    }
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
  if (group.records.back().seq() <= progress.seq) return std::nullopt;  // the snapshot holds it
  if (first_seq != progress.seq + 1) {
    throw fail("record seq " + std::to_string(first_seq) + " does not follow seq " +
               std::to_string(progress.seq));
  }
  for (std::size_t i = 0; i < group.records.size(); ++i) {
    if (group.records[i].seq() != first_seq + i) throw fail("sequence numbers have a gap");
  }
  Pool* pool = state.registry.find(group.pool);
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
  for (const v1::JournalRecord& record : group.records) {
    if (!record.client_id().empty()) {
      state.ledger.record(group.pool, record.client_id(), {record.client_batch(), record.seq()});
    }
  }
  return result;
}

ServiceState recover(const DaemonConfig& config, storage::CommitLog& log,
                     const storage::SnapshotStore& snapshots, RecoveryReport& report) {
  ServiceState state{PoolRegistry(config.pool_defaults, config.pools), {}, {}};

  storage::Position position = 0;  // log groups below this one are in the snapshot
  try {
    for (const storage::Position candidate : snapshots.positions()) {
      try {
        if (log.first_position() > candidate) {
          throw SnapshotDamage("the journal no longer holds the records after it");
        }
        load_snapshot(snapshots.read(candidate), state);
        position = candidate;
        report.snapshot_position = candidate;
        break;
      } catch (const SnapshotDamage& damage) {
        report.skipped.push_back(damage.what());
      } catch (const storage::LogError& error) {
        report.skipped.push_back(error.what());
      }
    }

    // From position 1 without a snapshot: a log whose first groups were dropped cannot stand
    // for the whole history, and read_from says which are missing.
    const std::unique_ptr<storage::GroupReader> reader =
        log.read_from(std::max<storage::Position>(position, 1));
    while (auto group = reader->next()) {
      report.records += group->records.size();
      apply_commit_group(to_commit_group(std::move(*group)), state);
      ++report.commits;
    }
  } catch (const InputError& error) {
    throw RecoveryError(error.what());
  } catch (const storage::LogError& error) {
    throw RecoveryError(error.what());
  }

  log.continue_from(std::max<storage::Position>(position, 1));
  report.pools = state.registry.size();
  return state;
}

}  // namespace yoke::daemon
