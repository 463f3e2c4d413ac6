// The commit log: where the daemon makes each batching window durable before it acknowledges,
// and where recovery and `yoke replay` read the pools' histories back. Two backends fit this
// shape: the local journal (daemon/journal/journal_commit_log.h: segment files on this
// machine) and a replicated log in which each pool has its own subject and one message per
// pool per window (one commit group) carries a global sequence number.
//
// Positions. Every stored commit group has a position: a number that grows with the order in
// which groups were committed, across all pools. Groups of one window may share a position
// (the local journal numbers records, and gives every group of a window the position of the
// window's first record) or have one each (a log that stores a group per message); either
// way a group of a later window has a larger position than every group of an earlier one.
// Positions need not be consecutive. end_position() is above every position stored; a
// snapshot taken between windows is named by end_position() and covers exactly the groups
// below it, so recovery reads from that position on.
//
// Threads: one at a time (yoked: its loop, or its journal thread alone during a commit(); the
// hand-over synchronizes: daemon/server/journal_thread.h); a backend may run threads of its own,
// but every call returns on the caller's thread. Errors: storage::LogError, LogDamage.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

#include "yoke/v1/records.pb.h"

namespace yoke::storage {

using Position = std::uint64_t;

// One pool's records committed together: the batches of one window for one pool, which the
// daemon repaired in one commit. A replay that commits them together reproduces the daemon's
// matching, ties included.
struct LoggedGroup {
  std::string pool;
  Position position = 0;
  // In seq order, consecutive, whole (events included). window_start is as stored: a backend
  // may set it (CommitLog::commit); readers go by `position`.
  std::vector<v1::JournalRecord> records;
};

// Reads commit groups in position order. Obtained from CommitLogView::read_from.
class GroupReader {
 public:
  virtual ~GroupReader() = default;

  // The next group, or nullopt at the end: every group made durable before read_from() was
  // called is returned (later ones may be). Groups of one window come in the order of their
  // pools' first records in the window. Cost: O(bytes read), reading ahead at most one window.
  // Throws LogDamage for stored entries that cannot be trusted (after returning the groups
  // before them) and LogError when the log cannot be read.
  virtual std::optional<LoggedGroup> next() = 0;

  // Why the reading ended before the end of what is stored, when it did: a damaged tail that
  // the log's writer would cut (a read-only reader sees it as it is). Not an error: the tail
  // was never acknowledged. Meaningful once next() has returned nullopt.
  virtual std::optional<std::string> stopped_early() const = 0;

  // How many stored groups the reading passed over because the log's rule does not count them
  // (a log shared by several writers: groups of a writer that had lost the pool; see
  // CommittedGroup::accepted). Never returned, never applied; `yoke replay` shows the count.
  // 0 for a log that counts every group (the local journal). Grows as next() reads.
  virtual std::uint64_t skipped() const { return 0; }
};

// The read side of a commit log, alone: what `yoke replay` needs. A view never changes the
// stored log, so it may look at the log of a running daemon.
class CommitLogView {
 public:
  virtual ~CommitLogView() = default;

  // Names the log in messages ("journal /var/lib/yoked/journal").
  virtual std::string describe() const = 0;

  // Every group of `pool` (of every pool when empty) at or above the returned position is
  // still stored; groups below it may have been dropped (drop_before). 0 when the log stores
  // nothing. O(1) locally; may ask a server.
  virtual Position first_position(std::string_view pool = {}) const = 0;

  // Reads the groups at positions >= from, of `pool` only when it is not empty (a log that
  // stores a pool per subject reads only that subject). from = 0 reads everything stored.
  // Throws LogError when groups at or above `from` were dropped (the message says "missing"),
  // and for a log that cannot be listed or reached.
  virtual std::unique_ptr<GroupReader> read_from(Position from, std::string_view pool = {}) = 0;
};

// Where one pool's group of a window went.
struct CommittedGroup {
  std::string pool;
  Position position = 0;
  // Whether the log counts the group. A log that several writers share decides by a rule
  // every reader applies (a replicated log: the pool's owner at that place in the log,
  // daemon/jetstream); a group it does not count is stored but skipped by every reader, and
  // must be neither acknowledged nor applied. The local journal counts every group.
  bool accepted = true;
};

// A window as commit() takes it, but with each record's `events` apart, as their wire bytes:
// events[i] is records[i]'s field `repeated Event events = 5` serialized (a tag and a length
// per Event), and records[i] holds no events. So a writer of serialized records writes them
// in place without making an Event message each (commit_encoded()).
struct EncodedWindow {
  std::vector<v1::JournalRecord> records;
  std::vector<std::string> events;
};

// What one commit() stored.
struct CommittedWindow {
  Position position = 0;  // the window's first group's position (0 for an empty window)
  Position end = 0;       // end_position() after it
  std::vector<CommittedGroup> groups;  // one per pool, in the order of their first records
};

// The records an EncodedWindow stands for, their events parsed back.
inline std::vector<v1::JournalRecord> decoded_records(EncodedWindow window) {
  if (window.events.size() != window.records.size()) {
    throw std::invalid_argument("an encoded window holds one list of events per record");
  }
  for (std::size_t i = 0; i < window.records.size(); ++i) {
    v1::JournalRecord parsed;
    const bool read = parsed.ParseFromString(window.events[i]);
    window.records[i].mutable_events()->Swap(parsed.mutable_events());
    if (!read || parsed.ByteSizeLong() != 0) {  // nothing but events may be left
      throw std::invalid_argument("an encoded window's events are not an events field");
    }
  }
  return std::move(window.records);
}

// The writer's side. One CommitLog per log per process (the local journal holds a lock).
class CommitLog : public CommitLogView {
 public:
  // Above every stored position: the next window's groups get this position or a larger one.
  // At least 1. O(1).
  virtual Position end_position() const = 0;

  // Makes the next window's position at least `position` (recovery, after loading a snapshot
  // named `position` from a store whose log holds nothing past it). No effect when the log is
  // already there. O(1).
  virtual void continue_from(Position position) = 0;

  // Stores one batching window and returns once it is durable (one group commit: what
  // "durable" means is the backend's, e.g. an fdatasync under the journal's group policy, or
  // a quorum's acknowledgement). `window` holds the window's records in the order the batches
  // were accepted, each naming its pool with a pool's records in seq order; the records of a
  // pool form one commit group (one message per pool in a log that stores a group per
  // message). A backend may set each record's window_start (the local journal does: the
  // window's position, by which it regroups). An empty window stores nothing. Cost: O(bytes)
  // plus one durability wait.
  // Throws LogError when a record cannot be stored. Then nothing of the window may be
  // acknowledged, though part of it may be stored and replayed later; the log refuses further
  // commits (the caller must stop and recover from what is stored).
  virtual CommittedWindow commit(std::vector<v1::JournalRecord> window) = 0;
  // commit() of the window the encoded one stands for: what is stored is the same. This
  // default parses the events back into the records; the local journal writes their bytes
  // between the record's fields 4 and 6, where Protobuf's serialization puts them. Throws
  // std::invalid_argument for events bytes that are not such a field, or one list per record.
  virtual CommittedWindow commit_encoded(EncodedWindow window) {
    return commit(decoded_records(std::move(window)));
  }

  // The caller needs no group below `position` any more (every pool this log writes has a
  // snapshot at or above it): the log may delete them, in whole units of its own (segment
  // files; messages by subject), never a group at or above `position`. end_position() stays
  // where it is, also after a reopen. Returns how many units it deleted. Cost: O(units
  // deleted).
  virtual std::size_t drop_before(Position position) = 0;
};

}  // namespace yoke::storage
