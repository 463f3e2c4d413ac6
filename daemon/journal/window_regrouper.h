// The journal's records back into commit groups. The journal stores one record per batch, the
// batches of a window one after another; records of one pool carrying the same window_start
// were committed together (records.proto, JournalRecord.window_start). This is the one place
// that regroups them: recovery and `yoke replay` both read the journal through it (by way of
// JournalCommitLog / JournalView).
#pragma once

#include <string_view>
#include <vector>

#include "daemon/storage/commit_log.h"

namespace yoke::journal {

class WindowRegrouper {
 public:
  // Adds the next record's payload. Groups completed by it (those of the window before, in
  // order of their pools' first records) are appended to `done`; each group's position is
  // its window_start. Throws storage::LogDamage for a payload that is not a JournalRecord.
  // O(payload).
  void add(std::string_view payload, std::vector<storage::LoggedGroup>& done);
  // Ends the reading: the last window's groups go to `done`.
  void finish(std::vector<storage::LoggedGroup>& done);

 private:
  std::uint64_t window_start_ = 0;
  std::vector<storage::LoggedGroup> open_;  // the current window's groups, one per pool
};

}  // namespace yoke::journal
