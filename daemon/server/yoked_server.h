// yoked's transport and loop: one Boost.Asio io_context owns the ZeroMQ sockets (ingest
// ROUTER, publish PUB, query ROUTER), the batching-window and snapshot timers, the signals and
// the metrics HTTP endpoint. All of that runs on the one thread that calls run(); the pools'
// repairs run on worker threads (RepairThreads: a strand per pool), which wake the loop when
// one is done. With the local journal, a sealed window is written and synced on a thread of its
// own (JournalThread) while the loop takes the next window's batches; the loop sends the
// acknowledgements when that thread wakes it. The PoolService holds the state and never sees a
// socket; a query about a pool whose repair is in flight waits for it, the others are answered
// at once. Snapshots go to a snapshot store and the commit log is trimmed below the oldest one
// kept, both through their interfaces (daemon/storage/), whichever backend holds them.
#pragma once

#include <chrono>
#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/signal_set.hpp>
#include <boost/asio/steady_timer.hpp>
#include <zmq.hpp>

#include "daemon/config/daemon_config.h"
#include "cluster_hooks.h"
#include "daemon/service/pool_service.h"
#include "daemon/service/query_handler.h"
#include "daemon/storage/snapshot_store.h"
#include "background_snapshot.h"
#include "journal_thread.h"
#include "repair_threads.h"
#include "zmq_socket_watcher.h"

namespace yoke::daemon {

class DaemonMetrics;
namespace metrics {
class HttpEndpoint;
}

// Exit statuses of yoked.
enum YokedExit : int {
  kYokedOk = 0,           // stopped by SIGTERM or SIGINT after a final snapshot
  kYokedFailure = 1,      // the journal, a snapshot or a socket failed; see the log
  kYokedConfigError = 2,  // bad flags or config file; nothing was started
};

class YokedServer {
 public:
  // Binds every endpoint; throws zmq::error_t or std::system_error naming what failed.
  YokedServer(const DaemonConfig& config, PoolService& service,
              storage::SnapshotStore& snapshots);
  // A daemon of a cluster: `cluster` serves, follows and claims pools and keeps their
  // snapshots (each pool in its own store).
  YokedServer(const DaemonConfig& config, PoolService& service, ClusterHooks& cluster);
  ~YokedServer();
  YokedServer(const YokedServer&) = delete;
  YokedServer& operator=(const YokedServer&) = delete;

  // Serves until a signal (then finishes the window, snapshots and returns kYokedOk) or a
  // failure that makes serving unsafe (returns kYokedFailure).
  int run();

  // The worker threads that repair the pools (tests queue their own tasks on a pool's strand).
  RepairThreads& repair_threads() { return *repairs_; }

 private:
  using Clock = std::chrono::steady_clock;
  using Envelope = std::vector<zmq::message_t>;
  struct HeldQuery {
    Envelope envelope;
    zmq::message_t payload;
    bool reads_prices = false;  // an explanation (QueryHandler::PoolRead)
  };

  // A worker finished a repair: collects what is done (handle_repairs). On the loop.
  void on_repairs_finished();
  // Publishes the diffs collected, answers the batches that waited for their pool's repair and
  // the queries held for pools no longer repairing; closes or arms the window for the batches
  // that joined it.
  void handle_repairs(PoolService::RepairsDone done);
  void answer_held_queries();
  // Whether a held explanation of `pool` (no repair in flight) waits for its prices, now being
  // made on the pool's worker (PoolService::prices_on_worker): then the pool's queries wait.
  bool prices_first(const std::string& pool, const std::vector<HeldQuery>& held);
  // Waits for the window syncing (finish_sync()) and every repair in flight, and handles them:
  // no worker then touches a pool, nor the journal thread the log, until the next window
  // closes. Blocks the loop for the longest repair in flight.
  void settle();
  // Waits for the window syncing on the journal thread, if any, and does what follows its
  // commit (on_window_synced()), without closing the next window: the log is the loop's again.
  // Blocks the loop for the sync: for settle() and the synchronous snapshots alone.
  void finish_sync();
  // The journal thread's commit ended: acks and repairs of the window (after_seal()), or the
  // stop after a failed journal; then the snapshot work that waited for the log (a written
  // snapshot's trimming, a snapshot's start), and the next window closes if it waited for
  // this sync.
  void on_window_synced();
  // What follows a window's commit: metrics, lost pools (cluster), acks, the repairs handed
  // over, and a snapshot after `after_events`.
  // `sync_took`: the commit's time (yoke_journal_sync_seconds).
  void after_seal(Clock::time_point closed, Clock::duration sync_took,
                  std::vector<std::pair<Ticket, v1::Ack>> acks,
                  const std::vector<std::string>& lost);
  // The log could not store a window: the cluster's path (its pools read again and claimed
  // anew) or the journal's (stop, journal_failed).
  void on_commit_failed(const std::exception& error);
  // settle() until no repair is in flight and the window is empty (every batch that waited
  // for a repair sealed and applied): the state a snapshot or the cluster part reads.
  void settle_all();
  void log_refusal(const v1::Ack& ack);
  void answer_query(Envelope& envelope, const zmq::message_t& payload);

  void on_ingest_message();
  void on_query_message();
  void reply(zmq::socket_t& socket, Envelope& envelope, const std::string& payload);
  void arm_window_timer();
  void close_window();
  void send_acks(std::vector<std::pair<Ticket, v1::Ack>> acks);
  void publish(v1::Diff& diff, Clock::time_point closed);
  // A snapshot now (query.proto, SnapshotRequest): of every pool, or with `only_pool` one pool.
  // The local store keeps every pool at one journal position (recovery needs that), so there
  // the file holds every pool and `only_pool` narrows the reply; the cluster backend stores
  // each pool on its own and writes `only_pool` alone. O(bytes written) plus a durable write.
  v1::SnapshotTaken take_snapshot(const std::optional<std::string>& only_pool = std::nullopt);
  void arm_snapshot_timer();
  // The timer's and after_events' snapshot: off the loop with the local backend
  // (BackgroundSnapshot; skipped while one is still in progress or waits to start),
  // take_snapshot() in a cluster. Seals the open window; the start waits for no sync on the
  // loop: while a window syncs it is left to that sync's completion (on_window_synced).
  void snapshot_in_background();
  // Starts the background snapshot that waits for a sync, once no window syncs (the snapshot
  // is named by the log's end). A failed start is logged (snapshot_failed). On the loop.
  void start_snapshot_after_sync();
  // A background snapshot's write ended: the log is trimmed below the oldest kept, as after
  // take_snapshot(). On the loop; while a window syncs it waits for that sync's completion
  // (the log is the journal thread's), which calls it again.
  void on_snapshot_written();
  // Completes a background snapshot in progress (waits for its pools' repairs, then its write).
  void finish_background_snapshot();
  void arm_cluster_timer();
  YokedServer(const DaemonConfig& config, PoolService& service, storage::SnapshotStore* snapshots,
              ClusterHooks* cluster);
  v1::Health health() const;
  void shut_down(int status);
  // At a stop: every batch that will get no other answer gets UNAVAILABLE rather than silence:
  // those of a window that failed (naming their batch), then the messages still queued on the
  // ingest socket, refused unread (read until it stays empty kDrainQuiet, kDrainLimit at most;
  // later ones find the socket closed).
  void refuse_in_flight(const std::string& reason);
  // Answers ingest messages UNAVAILABLE until quiet_until (pushed on by each message) or
  // give_up; counts them in `drained`. Throws zmq::error_t.
  void drain_ingest(const std::string& reason, std::chrono::steady_clock::time_point give_up,
                    std::chrono::steady_clock::time_point quiet_until, std::size_t& drained);
  // The answer to an ingest message refused unread: UNAVAILABLE naming no batch (clients leave
  // the resend to their timeout: an immediate one would meet the same stop).
  static v1::Ack unread_refusal(const std::string& reason);

  const DaemonConfig& config_;
  PoolService& service_;
  storage::SnapshotStore* snapshots_;  // local backend
  ClusterHooks* cluster_;               // cluster backend
  boost::asio::io_context io_;
  // After io_: its workers post to io_, and it is joined (and destroyed) first.
  std::unique_ptr<RepairThreads> repairs_;
  std::map<std::string, std::vector<HeldQuery>> held_queries_;  // by the pool being repaired
  std::unique_ptr<BackgroundSnapshot> background_;  // local backend only; posts to io_
  std::unique_ptr<JournalThread> journal_;  // local backend only; posts to io_
  zmq::context_t zmq_context_;
  zmq::socket_t ingest_;
  zmq::socket_t publisher_;
  zmq::socket_t query_;
  std::unique_ptr<ZmqSocketWatcher> ingest_watcher_;
  std::unique_ptr<ZmqSocketWatcher> query_watcher_;
  boost::asio::steady_timer window_timer_;
  boost::asio::steady_timer snapshot_timer_;
  boost::asio::steady_timer cluster_timer_;
  boost::asio::signal_set signals_;
  QueryHandler queries_;
  std::unique_ptr<DaemonMetrics> metrics_;
  std::unique_ptr<metrics::HttpEndpoint> http_;

  bool window_timer_armed_ = false;
  bool close_after_sync_ = false;  // the window was due while the previous one synced
  bool finishing_sync_ = false;     // finish_sync(): the next window waits for its timer
  bool ingest_paused_ = false;      // the window is full while another syncs: not read
  bool snapshotting_ = false;  // take_snapshot() is settling the windows
  bool start_after_sync_ = false;  // a background snapshot starts when the sync in flight ends
  std::uint64_t events_since_snapshot_ = 0;  // journalled since the last snapshot
  std::uint64_t last_snapshot_position_ = 0;  // log position of the newest snapshot
  Ticket next_ticket_ = 1;
  std::map<Ticket, Envelope> waiting_;  // peers whose acknowledgement waits for the window
  std::chrono::steady_clock::time_point started_;
  bool stopping_ = false;
  bool journal_failed_ = false;  // stop without a snapshot: only the disk may be trusted
  int exit_status_ = kYokedOk;
};

}  // namespace yoke::daemon
