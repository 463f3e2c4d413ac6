// Journal records back into the commits the daemon made: records of one pool that carry the
// same window_start were repaired together (records.proto, JournalRecord.window_start), so a
// replay that commits them together reproduces the same matching, ties included. Recovery and
// `yoke replay` of a journal directory both read the journal through this.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "engine/events.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {

struct CommitGroup {
  std::string pool;
  std::uint64_t window_start = 0;
  std::vector<v1::JournalRecord> records;  // in seq order, events converted below
  std::vector<Event> events;               // every record's events, in order
};

class CommitGrouper {
 public:
  // Adds the next journal record (its payload). Groups completed by it (those of the window
  // before, in order of first appearance) are appended to `done`. Throws InputError for a
  // payload that is not a JournalRecord or holds an event no daemon would have accepted.
  void add(std::string_view payload, std::vector<CommitGroup>& done);
  // Ends the journal: the last window's groups go to `done`.
  void finish(std::vector<CommitGroup>& done);

 private:
  std::uint64_t window_start_ = 0;
  std::vector<CommitGroup> open_;  // the current window's groups, one per pool
};

}  // namespace yoke::daemon
