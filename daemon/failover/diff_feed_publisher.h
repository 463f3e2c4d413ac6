// The pools' diffs on NATS (cluster mode): beside the ZeroMQ PUB socket, the serving daemon
// stores each diff of a pool on "<prefix>.diff.<token>" (jetstream/diff_feed_message.h), so a
// watcher can read them from the stream, from any seq still kept, across failovers.
//
// Rules:
// - Only diffs of windows the log acknowledged come here (the server publishes after seal and
//   apply), so no diff is ever stored ahead of the log.
// - One diff per seq, in seq order: a pool has at most one diff in flight. Its
//   acknowledgement (libnats' asynchronous-publish thread) sends the next diff queued for the
//   pool at once, so a burst goes out back to back without ever waiting on the daemon's loop.
// - Cost: publish() never waits for NATS. It queues the diff and, when the pool has nothing in
//   flight, hands it to js_PublishMsgAsync (a copy and a socket write by libnats' flusher). The
//   acknowledgement path of batches has no round trip added; a diff reaches the stream about
//   one round trip after the one before it of the same pool (400 diffs of one pool stored in
//   0.41-0.45 s on a loopback R3 cluster of this 2-core machine, nats.diff_feed prints it),
//   which keeps up with the pool's windows: each costs at least a round trip to the log too.
// - A failed publish (no acknowledgement within publish_timeout, no stream leader, a full
//   stream) is logged ("diff_publish_failed") and the daemon keeps serving: the log is the
//   truth. The pool's diffs stay queued; pump() (every cluster tick) waits retry_after, reads
//   the subject's last stored diff (one round trip: a timed-out diff may have been stored
//   after all), drops what is stored and sends the rest, so the gap is filled from what this
//   daemon holds. At most max_queued diffs wait per pool; beyond that the oldest are dropped
//   and the subject keeps a gap ("diff_feed_gap"), which watchers detect by prev_seq.
// - A new server of a pool calls resume(): the subject's last stored diff says where its
//   predecessor stopped; diffs up to that seq are not stored again (a takeover republishes
//   exactly the missing ones).
// - Trimming follows the pool's snapshots: once `snapshots_kept` snapshots of the pool were
//   written here, the diffs covered by the oldest one kept (seq <= its seq) are purged, as the
//   pool's log is; the newest stored diff always stays, so the subject says where it ends.
//   Purging needs the stream sequences of the diffs, known for those stored by this daemon;
//   older ones go when a later trim purges below one of them.
// - A late diff is checked before it is sent: one whose window closed more than stale_after
//   ago (this process stalled, e.g. SIGSTOP between an acknowledgement and its diff, or the
//   stream lagged) is sent only by pump(), after `still_serving` (the claims: one round trip)
//   says the pool is still served here and the subject's end was read again; otherwise a
//   daemon that claimed the pool meanwhile has stored it already. On a connection with
//   ConnectionSettings::send_at_once, a diff handed to libnats is in the kernel's socket
//   before the call returns, so a stall cannot hold it back in libnats' buffer until after
//   a claim. A stall between the staleness check and that write (the same few microseconds of
//   one thread; longer under a sanitizer: CI saw it once) is caught by the stream itself: each
//   diff is sent expecting the subject's last stream sequence this daemon knows (JetStream's
//   expected last subject sequence; on a subject read as empty, no message), so it is refused
//   once a successor stored more.
//
// Threads: the public calls are for the daemon's one thread; the acknowledgement callbacks
// run on libnats' thread. One mutex guards the pools' queues.
#pragma once

#include <chrono>
#include <cstdint>
#include <deque>
#include <functional>
#include <map>
#include <mutex>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "daemon/cluster/nats_connection.h"
#include "daemon/cluster/nats_handles.h"
#include "daemon/jetstream/pool_subjects.h"

namespace yoke::failover {

struct DiffFeedSettings {
  std::string stream;
  std::string subject_prefix;
  std::chrono::milliseconds publish_timeout{5000};  // one diff's acknowledgement
  std::chrono::milliseconds retry_after{500};       // after a failure, before checking again
  std::size_t max_queued = 4096;                    // per pool
  std::size_t snapshots_kept = 2;                   // [snapshots] keep
  // A diff whose window closed longer ago than this is checked before it is sent
  // ([cluster] heartbeat_ms: no claim can follow a window of a daemon that kept beating).
  std::chrono::milliseconds stale_after{500};
  // Whether this daemon still serves the pool (as the log's claims say now); throws when it
  // cannot tell. Called by pump() only. Unset: assumed.
  std::function<bool(const std::string& pool)> still_serving;
};

// What the publisher knows of one pool (for logs, metrics and tests).
struct DiffFeedStatus {
  bool resumed = false;         // the subject's end is known
  std::uint64_t stored_seq = 0;  // the newest diff known stored (0: none)
  std::size_t queued = 0;       // diffs not known stored yet (the first may be in flight)
  bool failing = false;         // the last publish failed; pump() retries
  std::uint64_t failures = 0;   // publishes failed so far
};

class DiffFeedPublisher {
 public:
  using Clock = std::chrono::steady_clock;

  // Opens its own JetStream context on `connection` (which must outlive this) with the
  // acknowledgement callback. Sends nothing yet. Throws cluster::ClusterError.
  DiffFeedPublisher(cluster::NatsConnection& connection, DiffFeedSettings settings);
  // Stops sending, waits up to publish_timeout for the diffs in flight, closes the context.
  // Diffs still queued are not stored: the pool's next server fills them (resume()).
  ~DiffFeedPublisher();
  DiffFeedPublisher(const DiffFeedPublisher&) = delete;
  DiffFeedPublisher& operator=(const DiffFeedPublisher&) = delete;

  // This daemon starts serving `pool`: forgets what was queued for it and reads the newest
  // diff stored on its subject (one round trip, at most the connection's api_timeout).
  // Returns its seq (0 when the subject holds none); nullopt when the read failed (logged;
  // pump() tries again, and diffs queue meanwhile).
  std::optional<std::uint64_t> resume(const std::string& pool);

  // Queues the diff `seq` (covering prev_seq + 1 .. seq) of `pool`, whose window closed at
  // `window_closed`; `publication` is the serialized yoke.v1.Publication. A seq already
  // stored or queued is skipped; a prev_seq past the last seq held is logged as a gap (this
  // daemon does not hold those diffs). Sends at once when the pool has nothing in flight and
  // the diff is not late. Never waits for NATS. O(bytes).
  void publish(const std::string& pool, std::uint64_t seq, std::uint64_t prev_seq,
               std::string publication, Clock::time_point window_closed);

  // Logs what the callbacks recorded, then, for each pool whose last publish failed (after
  // retry_after), whose subject's end is not known yet or whose next diff is late: asks
  // still_serving (a pool no longer served here drops its queue), reads the subject's last
  // stored diff (one round trip each), drops what is stored and sends the next. Call between
  // windows, e.g. every cluster tick. No round trip when nothing failed or was late.
  void pump(Clock::time_point now);

  // This daemon no longer serves `pool`: drops its queue (a diff in flight may still land).
  void forget(const std::string& pool);

  // A snapshot of `pool` at `seq` was written (the pool's store keeps the newest
  // snapshots_kept). Trims the diff subject as the header says: one purge round trip when
  // there is something to purge.
  void snapshot_written(const std::string& pool, std::uint64_t seq);

  DiffFeedStatus status(const std::string& pool) const;

  // Waits until no pool has a diff in flight or queued (or one failed), at most `timeout`.
  // Returns whether everything queued is stored. For tests and orderly stops.
  bool settle(std::chrono::milliseconds timeout);

 private:
  struct Queued {
    std::uint64_t seq = 0;
    std::uint64_t prev_seq = 0;
    std::string publication;
    Clock::time_point checked_at{};  // the window's close, or the last check by pump()
  };
  struct Lane {
    std::string subject;
    bool resumed = false;
    std::uint64_t stored_seq = 0;
    std::deque<Queued> queue;  // not known stored; the front is in flight when in_flight
    bool in_flight = false;
    bool failed = false;
    bool late = false;  // the next diff waits for pump()'s checks
    Clock::time_point retry_at{};
    std::uint64_t failures = 0;
    // (seq, stream sequence) of the diffs this daemon stored, oldest first: for trimming.
    std::deque<std::pair<std::uint64_t, std::uint64_t>> stored;
    std::deque<std::uint64_t> snapshot_seqs;  // of the snapshots written here, oldest first
  };
  struct Note {  // what a callback saw, logged later on the daemon's thread
    std::string pool;
    std::uint64_t seq = 0;
    std::string reason;
  };

  // The callback's closure: libnats may still run a callback (an ack timeout) after the
  // context is destroyed, so the closure outlives the publisher (never freed, a few bytes per
  // publisher made) and the destructor disarms it.
  struct AckRelay {
    std::mutex mutex;
    DiffFeedPublisher* publisher = nullptr;
  };

  static void on_ack(jsCtx* context, natsMsg* message, jsPubAck* ack, jsPubAckErr* failure,
                     void* closure);
  void acknowledged(natsMsg* message, const jsPubAck* ack, const jsPubAckErr* failure);
  Lane& lane_of(const std::string& pool);                // mutex held
  void send_front(const std::string& pool, Lane& lane);  // mutex held
  void fail_front(const std::string& pool, Lane& lane, std::string reason);  // mutex held
  void drop_stored(Lane& lane, std::uint64_t stored_seq);                    // mutex held
  void log_notes();

  cluster::NatsConnection& connection_;
  DiffFeedSettings settings_;
  jetstream::PoolSubjects subjects_;
  AckRelay* relay_;
  cluster::JetStreamHandle context_;
  mutable std::mutex mutex_;
  std::map<std::string, Lane> lanes_;                 // by pool
  std::map<std::string, std::string> pool_of_subject_;
  std::vector<Note> notes_;
  bool closing_ = false;
};

}  // namespace yoke::failover
