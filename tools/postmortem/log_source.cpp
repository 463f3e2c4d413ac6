#include "log_source.h"

#include <set>

#include "daemon/recovery/group_sequence.h"
#include "daemon/recovery/recovery_error.h"
#include "daemon/recovery/snapshot_choice.h"
#include "daemon/service/wire_types.h"
#include "replay_error.h"

namespace yoke::postmortem {

std::vector<std::string> log_pools(storage::CommitLogView& log) {
  std::set<std::string> pools;
  try {
    const std::unique_ptr<storage::GroupReader> reader = log.read_from(0);
    while (auto group = reader->next()) {
      if (!group->records.empty() && group->records.back().retired()) {
        pools.erase(group->pool);  // until a later group creates it again
      } else {
        pools.insert(group->pool);
      }
    }
  } catch (const std::exception& error) {
    throw ReplayError(log.describe() + ": " + error.what());
  }
  return {pools.begin(), pools.end()};
}

LogSource::LogSource(storage::CommitLogView& log, const storage::SnapshotStore* snapshots,
                     LogNames names, LogReplayOptions options, std::ostream& notes,
                     std::ostream& warnings)
    : log_(log),
      snapshots_(snapshots),
      names_(std::move(names)),
      options_(std::move(options)),
      notes_(notes),
      warnings_(warnings) {
  read_groups();
}

void LogSource::read_groups() {
  const std::string& pool = options_.pool;
  try {
    const std::unique_ptr<storage::GroupReader> reader = log_.read_from(0, pool);
    while (auto group = reader->next()) {
      if (!group->records.empty() && group->records.back().retired()) {
        // The pool's life so far ends here; a later group starts a new one at seq 1.
        retired_at_ = {group->position, group->records.back().seq()};
        groups_.clear();
        event_counts_.clear();
        continue;
      }
      for (const v1::JournalRecord& record : group->records) {
        event_counts_[record.seq()] = static_cast<std::size_t>(record.events_size());
      }
      groups_.push_back(daemon::to_commit_group(std::move(*group)));
    }
    if (retired_at_ && !groups_.empty()) {
      warnings_ << "note: pool " << pool << " was retired at seq " << retired_at_->second
                << " (log position " << retired_at_->first
                << ") and created again: replaying its life since\n";
    }
    if (const auto early = reader->stopped_early()) {
      warnings_ << "note: " << *early << ": not replayed\n";
    }
    if (const std::uint64_t skipped = reader->skipped(); skipped > 0) {
      warnings_ << "note: " << skipped << " stored group(s) of pool " << pool
                << " written by a daemon that no longer owned it: not counted by the log, "
                   "not replayed\n";
    }
  } catch (const std::exception& error) {
    throw ReplayError(names_.log + ": " + error.what());
  }
}

Pool& LogSource::start() {
  const std::string& pool = options_.pool;
  if (groups_.empty() && retired_at_) {
    throw ReplayError(names_.log + ": pool " + pool + " was retired at seq " +
                      std::to_string(retired_at_->second) + " (log position " +
                      std::to_string(retired_at_->first) +
                      ") and not created again: it holds nothing to replay");
  }
  if (groups_.empty()) {
    // A log trimmed below the pool's newest snapshot, with nothing written since (a daemon
    // stopped right after its snapshot): the snapshot is the whole story.
    pool_ = restore_snapshot(UINT64_MAX, true);
    if (pool_) return *pool_;
    throw ReplayError(names_.log + ": the journal holds no record of pool " + pool);
  }
  const v1::JournalRecord& first = groups_.front().records.front();
  if (options_.from > 0) {
    pool_ = restore_snapshot(options_.from, true);
    if (pool_) return *pool_;
    warnings_ << "note: no snapshot of pool " << pool << " at or before seq " << options_.from
              << " that the journal continues: starting from the journal's first record\n";
  }
  if (first.seq() == 1) {
    pool_ = daemon::make_pool(first.created());
    if (!pool_) {
      throw ReplayError(names_.log + ": the first record of pool " + pool +
                        " does not say how the pool was created");
    }
    return *pool_;
  }
  pool_ = restore_snapshot(UINT64_MAX, false);
  if (pool_) return *pool_;
  throw ReplayError(names_.log + ": the journal starts at seq " + std::to_string(first.seq()) +
                    " of pool " + pool + " and no snapshot in " + names_.snapshots +
                    " leads up to it");
}

std::unique_ptr<Pool> LogSource::restore_snapshot(std::uint64_t most, bool newest) {
  if (snapshots_ == nullptr) return nullptr;
  const std::uint64_t log_first = groups_.empty() ? 0 : groups_.front().records.front().seq();
  const auto retired_at = retired_at_;
  daemon::SnapshotWish wish;
  wish.pool = options_.pool;
  wish.oldest_first = !newest;
  wish.first_logged_seq = log_first;
  wish.accepts = [&](storage::Position position, const v1::SnapshotRecord& record) {
    // A snapshot from before the pool's last retirement holds an earlier life.
    if (retired_at && position <= retired_at->first) return false;
    return record.seq() + 1 >= log_first && record.seq() <= most;
  };
  std::vector<daemon::SkippedSnapshot> skipped;
  std::optional<daemon::ChosenSnapshot> chosen;
  try {
    chosen = daemon::choose_snapshot(log_, *snapshots_, wish, skipped);
  } catch (const std::exception& error) {
    throw ReplayError(names_.snapshots + ": " + error.what());
  }
  for (const daemon::SkippedSnapshot& skip : skipped) {
    if (skip.reason == daemon::SkippedSnapshot::Reason::damaged) {
      warnings_ << "note: " << skip.why << ": skipped\n";
    }
  }
  if (!chosen) return nullptr;
  const std::uint64_t seq = chosen->pools.front().record.seq();
  while (next_ < groups_.size() && groups_[next_].records.back().seq() <= seq) ++next_;
  snapshot_seq_ = seq;
  last_seq_ = seq;
  return std::move(chosen->pools.front().pool);
}

const ReplayedCommit* LogSource::next() {
  // Groups the start's snapshot holds already are passed over (place_group says which).
  for (; next_ < groups_.size(); ++next_) {
    const daemon::CommitGroup& group = groups_[next_];
    const std::uint64_t first_seq = group.records.front().seq();
    const std::uint64_t last_seq = group.records.back().seq();
    if (options_.until != 0 && last_seq > options_.until) {
      if (first_seq <= options_.until) {
        notes_ << "note: seq " << options_.until << " was committed together with seqs up to "
               << last_seq << ": stopping before that commit\n";
      }
      next_ = groups_.size();
      return nullptr;
    }
    try {
      // The pool exists here: start() made or restored it.
      if (daemon::place_group(group, last_seq_, true) != daemon::GroupStep::held) break;
    } catch (const daemon::RecoveryError& error) {
      throw ReplayError(names_.replay + ": " + error.what());
    }
  }
  if (next_ == groups_.size()) return nullptr;
  const daemon::CommitGroup& group = groups_[next_];
  const std::uint64_t first_seq = group.records.front().seq();
  const std::uint64_t last_seq = group.records.back().seq();
  ++next_;
  last_seq_ = last_seq;
  // Event i of the commit belongs to the record whose events cover position i.
  const auto origin = [&group, this](std::size_t i) {
    EventOrigin out;
    for (const v1::JournalRecord& record : group.records) {
      const auto count = event_counts_.find(record.seq());
      const std::size_t events = count == event_counts_.end() ? 0 : count->second;
      if (i < events) {
        out.seq = record.seq();
        out.client_id = record.client_id();
        out.client_batch = record.client_batch();
        return out;
      }
      i -= events;
    }
    return out;
  };
  current_ = ReplayedCommit{first_seq, last_seq, group.events,
                            origin,    last_seq, group.records.back().wall_time_unix_us()};
  return &current_;
}

std::string LogSource::refusal(const ReplayedCommit& commit, const EventError& error) const {
  return names_.replay + ": pool " + options_.pool + " seq " + std::to_string(commit.first) +
         ": the journal holds an event that does not apply: " + error.message;
}

}  // namespace yoke::postmortem
