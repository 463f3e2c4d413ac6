#include "recovery.h"

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
void load_snapshot(const SnapshotContents& contents, ServiceState& state) {
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

void apply_commit_group(const CommitGroup& group, ServiceState& state) {
  PoolProgress& progress = state.progress[group.pool];
  const auto fail = [&group](const std::string& why) {
    return RecoveryError("journal window " + std::to_string(group.window_start) + ", pool " +
                         group.pool + ": " + why);
  };
  const std::uint64_t first_seq = group.records.front().seq();
  if (group.records.back().seq() <= progress.seq) return;  // the snapshot holds it already
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
}

ServiceState recover(const DaemonConfig& config, journal::Journal& journal,
                     const SnapshotStore& snapshots, RecoveryReport& report) {
  ServiceState state{PoolRegistry(config.pool_defaults, config.pools), {}, {}, 1};

  std::uint64_t position = 0;  // journal records below this one are in the snapshot
  for (const std::uint64_t candidate : snapshots.positions()) {
    try {
      if (journal.first_position() > candidate) {
        throw SnapshotDamage("the journal no longer holds the records after it");
      }
      const std::filesystem::path path = snapshots.path_for(candidate);
      const SnapshotContents contents = read_snapshot_file(path);
      // The journal is replayed from the name's position: a header that says otherwise (a
      // file copied under another name) would skip or repeat records.
      if (contents.journal_position != candidate) {
        throw SnapshotDamage("snapshot " + path.string() + " holds journal position " +
                             std::to_string(contents.journal_position) +
                             ", not the one its name says");
      }
      load_snapshot(contents, state);
      position = candidate;
      report.snapshot_position = candidate;
      break;
    } catch (const SnapshotDamage& damage) {
      report.skipped.push_back(damage.what());
    } catch (const journal::Error& error) {
      report.skipped.push_back(error.what());
    }
  }

  std::vector<CommitGroup> groups;
  CommitGrouper grouper;
  const auto apply_groups = [&] {
    for (const CommitGroup& group : groups) {
      apply_commit_group(group, state);
      ++report.commits;
    }
    groups.clear();
  };
  try {
    journal::Reader reader = journal.read_after(position == 0 ? 0 : position - 1);
    while (auto record = reader.next()) {
      grouper.add(record->payload, groups);
      ++report.records;
      apply_groups();
    }
    grouper.finish(groups);
    apply_groups();
  } catch (const InputError& error) {
    throw RecoveryError(error.what());
  } catch (const journal::Error& error) {
    throw RecoveryError(error.what());
  }

  state.next_journal_position = std::max<std::uint64_t>({journal.next_position(), position, 1});
  report.pools = state.registry.size();
  return state;
}

}  // namespace yoke::daemon
