// `yoke replay --history V`: the history of a vertex over a replay. Every partner it had, from
// which point to which, with the pair's weight; when it was added and removed; and for each pair
// gained or lost the cause the engine names for it (MatchingDiff::removed_cause and
// added_cause: the index of the event in the committed batch), mapped back to where the event
// came from (a journal record's seq, client id and batch number, or a script's line) and
// printed in event-script words (`set 12 40 -3`, `remove 12`).
//
// Points are the daemon's seq numbers for a journal (a commit is named by the seq of its last
// record: the state after it) and commit numbers for a script. A pair "from A to B" was gained
// by the commit at A and lost by the commit at B: it is in every state from A up to, not
// including, B.
//
// When a commit's cause lists do not match its diff (an engine that does not report causes),
// a change goes back to the batch as a whole: to its only event when it has one, to "the first
// solve of the pool" when the pool was solved from scratch, else to "one of its N events".
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <span>
#include <string>
#include <unordered_map>
#include <vector>

#include <nlohmann/json.hpp>

#include "commit_observer.h"
#include "commit_source.h"
#include "yoke/events.h"
#include "yoke/pool.h"

namespace yoke::postmortem {

using Json = nlohmann::ordered_json;  // the same type as the CLI's (proto_json.h)

// The cause of a change: the event behind it.
struct ChangeCause {
  enum class Kind {
    event,        // events[index] of the commit
    first_solve,  // the pool was empty before the commit and was solved from scratch
    batch,        // not reported: one of the commit's batch_events events
  };
  Kind kind = Kind::event;
  std::size_t index = 0;
  Event event;
  EventOrigin origin;
  std::size_t batch_events = 0;
};

enum class HistoryChange { vertex_added, vertex_removed, pair_gained, pair_lost };

struct HistoryEntry {
  std::uint64_t first = 0;  // the commit's points (ReplayedCommit::first and at)
  std::uint64_t at = 0;
  HistoryChange change = HistoryChange::vertex_added;
  VertexKey other = 0;  // pair_gained, pair_lost: the partner
  Weight w = 0;         // pair_gained: the weight after the commit; pair_lost: before it
  ChangeCause cause;    // added, removed: the event itself
};

struct Partnership {
  VertexKey other = 0;
  Weight w = 0;             // when gained (or at the start of the replay)
  std::uint64_t from = 0;   // the point that gained it (the start point when it was held then)
  bool from_start = false;  // held before the first commit replayed
  std::optional<std::uint64_t> to;  // the point that lost it; nothing: held at the end
};

// A vertex's state at the start or the end of the replay.
struct VertexState {
  std::uint64_t at = 0;  // 0: before the first commit of an empty pool
  bool present = false;
  std::optional<VertexKey> mate;
  Weight pair_weight = 0;
};

struct VertexHistory {
  VertexKey vertex = 0;
  HistoryUnit unit = HistoryUnit::seq;
  VertexState start;
  std::vector<HistoryEntry> entries;  // commit by commit; within a commit: the vertex added or
                                      // removed in event order, then pairs lost, then gained
  std::vector<Partnership> partners;  // in the order they were gained
  VertexState end;
};

// Builds the histories of some vertices while a replay commits: an observer of the replay
// (replay_driver.h), or fed by hand (start, record, finish).
class HistoryBuilder : public CommitObserver {
 public:
  HistoryBuilder(const std::vector<VertexKey>& vertices, HistoryUnit unit);

  // The pool before the first commit: empty (at = 0) or restored from a snapshot at `at`.
  void start(const Pool& pool, std::uint64_t at);
  // After each commit, with the commit's result.
  void record(const ReplayedCommit& commit, const CommitResult& result);
  // The pool after the last commit replayed (at: its point).
  void finish(const Pool& pool, std::uint64_t at);

  const std::vector<VertexHistory>& histories() const { return histories_; }

  // As an observer: start(), record() and finish() at the replay's points.
  void started(const Pool& pool, std::uint64_t at, bool) override { start(pool, at); }
  bool committed(const Pool&, const CommitStep& step) override {
    record(step.commit, step.result);
    return true;
  }
  void finished(const Pool& pool, std::uint64_t at) override { finish(pool, at); }

 private:
  VertexHistory* find(VertexKey key);
  ChangeCause cause_of(const ReplayedCommit& commit, const CommitResult& result,
                       const std::vector<EventCause>& causes, std::size_t changes,
                       std::size_t i) const;
  static VertexState state_of(const Pool& pool, VertexKey key, std::uint64_t at);

  std::vector<VertexHistory> histories_;
  std::unordered_map<VertexKey, std::size_t> index_;  // vertex -> its history
  std::vector<bool> alive_;                           // per history, as the events go
};

// The history as text: a header line, one line per change, then the partners and the end:
//
//   history of 1 (pool default), seq 1 to seq 9:
//     seq 1: added: set 1 2 5 [seq 1, client alice, batch 1]
//     seq 1: pair with 2 gained (weight 5): first solve of the pool
//     seq 4: pair with 2 lost (weight 5): cause set 2 3 9 [seq 4, client alice, batch 4]
//     seqs 6-7: pair with 7 gained (weight 3): cause add 7 [seq 6]
//   partners of 1:
//     2 (weight 5) from seq 1 to seq 4
//     7 (weight 3) from seq 7, still paired at seq 9
//   at seq 9: 1 is paired with 7 (weight 3)
//
// `where` names the source in the header ("pool default", a script's name).
std::string history_text(const VertexHistory& history, const std::string& where);

// The JSON form: one object, documented in docs/formats.md ("Postmortem JSON") and, in short,
// in `yoke replay --help`.
Json history_json(const VertexHistory& history, const std::optional<std::string>& pool);

}  // namespace yoke::postmortem
