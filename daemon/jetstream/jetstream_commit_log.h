// The JetStream backend of the commit log (daemon/storage/commit_log.h): one stream per
// installation, a subject per pool (`<prefix>.ev.<token>`, pool_subjects.h), one message per
// pool per window (group_message.h). Positions are stream sequences: every group has its own,
// and a window's groups are the writer's messages in order (other writers of the stream, such
// as a snapshot store or another daemon, may take sequences between them; positions need not
// be consecutive).
//
// Durable means acknowledged by the stream: on an R3 stream a quorum holds the message (on
// nats-server 2.9.10 in memory and in files, fsynced within a minute; docs/jetstream.md). There are
// no conditional publishes and no message ids (unsafe on 2.9.10): which process may write a
// pool is decided by the log's order (ownership_rule.h). Each group carries the epoch its
// writer holds for the pool (set_epoch; 0 for a pool without one: a single writer that never
// claims), and every reader counts only the groups written under the epoch in force at their
// place in the log; commit() asks the pool's claims after each group, so it reports the same.
//
// Dropped groups are found by links, not by a stored mark: each group names the sequence of
// its pool's previous group, so a reader from P that meets a pool's first group linking to a
// sequence >= P knows the groups between were dropped and throws LogError ("missing").
// Errors of daemon/cluster are rethrown as storage::LogError naming the stream.
#pragma once

#include <chrono>
#include <cstdint>
#include <map>
#include <memory>
#include <set>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/cluster/nats_connection.h"
#include "daemon/jetstream/pool_subjects.h"
#include "daemon/storage/commit_log.h"

namespace yoke::jetstream {

struct JetStreamLogSettings {
  std::string stream;                     // the installation's stream: letters, digits, - and _
  std::string subject_prefix = "yoke";    // the stream holds "<prefix>.>"
  int replicas = 3;                       // used when open() creates the stream
  std::int64_t max_bytes = 1LL << 30;     // the stream's cap; publishes are refused beyond it
  std::chrono::milliseconds publish_timeout{5000};  // per message of a window
  // How long a reader waits for a message it knows is stored before giving up (LogError).
  std::chrono::milliseconds read_timeout{5000};
  // Readers look each group up at the stream leader instead of streaming it through a
  // consumer (cluster::ReaderSettings::by_lookup): two round trips a group, but they work as
  // soon as the stream has a leader again after a node died. The daemon's followers read this
  // way; a replay of a long log is faster without.
  bool read_by_lookup = false;
};

// The read side on a stream that exists: what `yoke replay` needs; never writes. Every call
// asks the stream leader through `connection`, which must outlive the view.
class JetStreamView : public storage::CommitLogView {
 public:
  // Sends nothing. Throws std::invalid_argument for a bad subject prefix.
  JetStreamView(cluster::NatsConnection& connection, JetStreamLogSettings settings);

  std::string describe() const override;
  // The sequence of the first stored group of any pool, 0 when none is stored. Of `pool`: just
  // after the last dropped group of the pool (the first stored group's link + 1; other
  // subjects' messages may lie between), or its first stored group when none was dropped.
  // One API round trip, two for a pool.
  storage::Position first_position(std::string_view pool = {}) const override;
  // An ordered consumer over the pool's subject (all pools' when empty) from `from`; it stops
  // at the last message stored when read_from was called. A few API round trips, then
  // O(bytes read). Groups dropped at or above `from` (from > 0) are a LogError from next().
  std::unique_ptr<storage::GroupReader> read_from(storage::Position from,
                                                  std::string_view pool = {}) override;

  cluster::NatsConnection& connection() const { return connection_; }
  const JetStreamLogSettings& settings() const { return settings_; }
  const PoolSubjects& subjects() const { return subjects_; }

 private:
  cluster::NatsConnection& connection_;
  JetStreamLogSettings settings_;
  PoolSubjects subjects_;
};

// A writer. Several (one per daemon) may share the stream and write the same pool's subject;
// whose groups count is the log's rule, through the epoch each writes a pool under.
class JetStreamCommitLog : public storage::CommitLog {
 public:
  // Makes sure the stream exists (cluster::ensure_stream: R`replicas`, file storage, DiscardNew
  // at max_bytes, DenyDelete) and reads where it ends. A few API round trips. Throws LogError
  // (unreachable, a stream of that name with other settings, too few servers) and
  // std::invalid_argument for a bad prefix.
  static std::unique_ptr<JetStreamCommitLog> open(cluster::NatsConnection& connection,
                                                  JetStreamLogSettings settings);

  std::string describe() const override { return view_.describe(); }
  storage::Position first_position(std::string_view pool = {}) const override {
    return view_.first_position(pool);
  }
  std::unique_ptr<storage::GroupReader> read_from(storage::Position from,
                                                  std::string_view pool = {}) override {
    return view_.read_from(from, pool);
  }
  // The stream's last sequence + 1 as of open() and this writer's acknowledgements. O(1).
  storage::Position end_position() const override { return end_; }
  // Beyond end_position() this works only on a stream that holds no messages: it moves the
  // stream's sequence forward (purge below `position`) and stores a start marker on
  // "<prefix>.start", so the next window comes after it. Throws LogError on a stream that
  // holds messages (moving it would delete them). A few round trips.
  void continue_from(storage::Position position) override;
  // Publishes one message per pool (in the order of the pools' first records) under the pool's
  // epoch, waits for each acknowledgement in turn, then asks the pool's claim subject whether
  // an accepted claim came between the epoch and the group (window_acceptance.h):
  // groups[i].accepted says whether every reader counts the group. Cost per pool of the
  // window: two round trips (the publish and the claim check; two more per claim of the pool
  // between its epoch and the group, which is rare), plus, for a pool this writer has not
  // written since open(), one lookup of its last group.
  // The first group after set_epoch() is judged by folding all of the pool's claims instead
  // (ClaimLedger: one lookup, an ordered consumer, O(claims)), so an epoch the rule never gave
  // (a refused claim's sequence) is reported not accepted rather than trusted.
  // A pool whose group was not accepted is lost to this writer: its groups in later windows
  // are not published at all and are reported {pool, position 0, accepted false}, until
  // set_epoch() gives it a new epoch. The other pools of the window are unaffected; a window
  // that stores nothing this way has position 0 and leaves end_position() where it was.
  // Any failure (a timeout leaves the message's fate unknown) is a LogError, and every later
  // commit is refused.
  storage::CommittedWindow commit(std::vector<v1::JournalRecord> window) override;
  // Purges every pool's subject below `position` (one request) and returns how many messages
  // went (the stream's count before and after: two more round trips).
  std::size_t drop_before(storage::Position position) override;

  // The epoch this writer writes `pool` under from the next window on: the sequence of its
  // accepted claim (claim_pool in pool_claims.h), or 0 (no claim: a single writer). Makes a
  // lost pool writable again. The caller must have read the pool's windows below the claim
  // first (the old owner's last windows count until the claim). The pool's next group links to
  // the subject's last message, looked up again (another writer may have written since).
  // O(log pools), sends nothing.
  void set_epoch(std::string_view pool, std::uint64_t epoch);
  // After a failed commit (a publish whose fate is unknown, e.g. a timeout during a stream
  // leader election): writes again, but every pool it had written counts as lost until
  // set_epoch() (its last window may or may not be stored: the caller must read the pool
  // from the log again and claim it anew before writing it). Sends nothing. O(pools).
  void resume_after_failure();
  // The epoch `pool` is written under (0 when never set). O(log pools).
  std::uint64_t epoch_of(std::string_view pool) const;
  // Whether a group of `pool` was not accepted since its epoch was last set (commit() then
  // refuses to write the pool). O(log pools).
  bool lost(std::string_view pool) const;
  // Purges `pool`'s commit groups below `position` (cluster mode: each pool has its own
  // snapshots, so it is dropped on its own) and returns how many messages went. Its claims
  // stay. Three round trips, as drop_before. Throws LogError, std::invalid_argument for "".
  std::size_t drop_pool_before(std::string_view pool, storage::Position position);

 private:
  JetStreamCommitLog(cluster::NatsConnection& connection, JetStreamLogSettings settings,
                     storage::Position end);
  storage::Position previous_of_pool(const std::string& pool);
  std::size_t purge_below(const std::string& filter, storage::Position position);

  JetStreamView view_;
  storage::Position end_;
  bool failed_ = false;
  // The sequence of each pool's last group this writer knows of (links of the next groups).
  std::map<std::string, storage::Position, std::less<>> last_of_pool_;
  std::map<std::string, std::uint64_t, std::less<>> epoch_of_pool_;
  std::set<std::string, std::less<>> lost_pools_;
  // Pools whose epoch was set and not yet checked against the whole fold of their claims.
  std::set<std::string, std::less<>> unverified_epochs_;
};

}  // namespace yoke::jetstream
