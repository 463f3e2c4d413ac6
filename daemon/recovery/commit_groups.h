// Commit groups as the engine takes them: a storage::LoggedGroup (the records of one pool
// that the daemon repaired together, as the commit log returns them: commit_log.h) with its
// events decoded and checked once. Recovery and `yoke replay` (tools/postmortem) both commit
// what this gives, so they commit at the daemon's points and break ties the same way.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "daemon/storage/commit_log.h"
#include "yoke/events.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {

struct CommitGroup {
  std::string pool;
  std::uint64_t position = 0;              // the group's commit log position
  std::vector<v1::JournalRecord> records;  // in seq order, events converted below
  std::vector<Event> events;               // every record's events, in order
};

// Decodes every record's events (moving the records, their events dropped: kept once, as
// engine events). Throws InputError naming the pool and seq of a record whose event no daemon
// would have accepted. O(events).
CommitGroup to_commit_group(storage::LoggedGroup group);

}  // namespace yoke::daemon
