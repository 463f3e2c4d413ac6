// Where a replay's commits come from (replay_driver.h): the batches of an event script
// (script_source.h) or the commit groups of one pool in a daemon's log (log_source.h: a data
// directory or a cluster's stream, through the storage interfaces). A source owns the pool the
// commits apply to, hands the commits out in order and names them in messages; it neither
// commits nor prints (observers do that).
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <span>
#include <string>

#include "yoke/events.h"
#include "yoke/pool.h"

namespace yoke::postmortem {

// How points of the replay are numbered: a log's seq numbers (a commit is named by the seq of
// its last record: the state after it), or a script's commit numbers (from 1).
enum class HistoryUnit { seq, commit };

// Where an event of a replayed commit came from.
struct EventOrigin {
  std::uint64_t seq = 0;           // journal: the record's seq (0 for a script)
  std::string client_id;           // journal: the batch's client id (empty: none)
  std::uint64_t client_batch = 0;  // journal: the client's batch number (0: none)
  std::size_t line = 0;            // script: the event's line (0 for a journal)
};

// One commit of the replay, as the source hands it out.
struct ReplayedCommit {
  std::uint64_t first = 0;  // journal: seq of the commit's first record; script: the commit
  std::uint64_t at = 0;     // journal: seq of its last record; script: the commit number
  std::span<const Event> events;
  std::function<EventOrigin(std::size_t)> origin;   // where events[i] came from
  std::optional<std::uint64_t> seq = std::nullopt;  // journal: the pool's seq after it (printed)
  // journal: when the daemon wrote its last record
  std::optional<std::uint64_t> wall_time_us = std::nullopt;
};

class CommitSource {
 public:
  virtual ~CommitSource() = default;

  virtual HistoryUnit unit() const = 0;

  // The pool the first commit applies to: empty, or restored from a snapshot. Call once,
  // before next(). Throws ReplayError when there is nothing to start from.
  virtual Pool& start() = 0;
  // The point start() stands at: 0 for an empty pool, else the restored snapshot's seq; and
  // whether it restored one. Valid after start().
  virtual std::uint64_t start_point() const = 0;
  virtual bool from_snapshot() const = 0;

  // The next commit, or nullptr after the last one to replay (the end, or the stop asked
  // for). Valid until the next call. Throws ReplayError when the source breaks its own rules
  // (a log's missing seq).
  virtual const ReplayedCommit* next() = 0;
  // How many commits next() may still return (for a progress bar).
  virtual std::size_t remaining() const = 0;

  // The message for a commit the pool refuses: which commit, where it came from, and why.
  virtual std::string refusal(const ReplayedCommit& commit, const EventError& error) const = 0;
};

}  // namespace yoke::postmortem
