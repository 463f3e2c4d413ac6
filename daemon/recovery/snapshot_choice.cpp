#include "snapshot_choice.h"

#include <algorithm>
#include <utility>

#include "daemon/storage/storage_error.h"
#include "snapshot_restore.h"

namespace yoke::daemon {
namespace {

constexpr const char* kLogDropped = "the journal no longer holds the records after it";

// The wanted records of one snapshot, restored; nothing (and `skip` filled in) when it does
// not qualify. Throws SnapshotDamage for a record that does not restore.
std::optional<ChosenSnapshot> restore_wanted(storage::Position position,
                                             storage::SnapshotContents contents,
                                             const SnapshotWish& wish, bool log_holds_position,
                                             SkippedSnapshot& skip) {
  ChosenSnapshot chosen{position, {}};
  for (v1::SnapshotRecord& record : contents.pools) {
    if (!wish.pool.empty() && record.pool() != wish.pool) continue;
    if (!log_holds_position && record.seq() + 1 < wish.first_logged_seq.value_or(0)) {
      skip = {position, SkippedSnapshot::Reason::log_dropped, kLogDropped};
      return std::nullopt;
    }
    if (!wish.pool.empty() && wish.accepts && !wish.accepts(position, record)) {
      skip = {position, SkippedSnapshot::Reason::not_wanted,
              "the snapshot at " + std::to_string(position) + " holds pool " + wish.pool +
                  " at seq " + std::to_string(record.seq()) + ", not wanted here"};
      return std::nullopt;
    }
    std::unique_ptr<Pool> pool = restore_checked(record);
    chosen.pools.push_back({std::move(record), std::move(pool)});
  }
  if (!wish.pool.empty() && chosen.pools.empty()) {
    skip = {position, SkippedSnapshot::Reason::not_wanted,
            "the snapshot at " + std::to_string(position) + " holds no pool " + wish.pool};
    return std::nullopt;
  }
  return chosen;
}

}  // namespace

std::optional<ChosenSnapshot> choose_snapshot(const storage::CommitLogView& log,
                                              const storage::SnapshotStore& snapshots,
                                              const SnapshotWish& wish,
                                              std::vector<SkippedSnapshot>& skipped) {
  std::vector<storage::Position> candidates = snapshots.positions();
  if (wish.oldest_first) std::reverse(candidates.begin(), candidates.end());
  for (const storage::Position candidate : candidates) {
    try {
      const bool log_holds_position = log.first_position(wish.pool) <= candidate;
      // Without the pool's first seq in the log, its first position alone decides.
      if (!log_holds_position && (wish.pool.empty() || !wish.first_logged_seq)) {
        skipped.push_back({candidate, SkippedSnapshot::Reason::log_dropped, kLogDropped});
        continue;
      }
      SkippedSnapshot skip;
      if (auto chosen = restore_wanted(candidate, snapshots.read(candidate), wish,
                                       log_holds_position, skip)) {
        return chosen;
      }
      skipped.push_back(std::move(skip));
    } catch (const SnapshotDamage& damage) {
      skipped.push_back({candidate, SkippedSnapshot::Reason::damaged, damage.what()});
    } catch (const storage::LogError& error) {
      skipped.push_back({candidate, SkippedSnapshot::Reason::damaged, error.what()});
    }
  }
  return std::nullopt;
}

}  // namespace yoke::daemon
