// The daemon's state machine, free of sockets and timers: pools, their progress, the retry
// ledger, the journal and the batching window. The server (daemon/server) feeds it messages
// and closes windows; tests drive it directly. The commit log is an interface
// (daemon/storage/commit_log.h): the service never knows which backend stores its windows.
//
// A batch goes through: decode (batch_decoder.h) -> pool name and retry rules -> the pool's
// checks against its state plus the batches already in the window -> the window. Closing the
// window is two steps: seal() commits every batch of the window to the log at once (group commit),
// and returns their acknowledgements; apply() then repairs each pool once for all of its
// batches and returns one diff per pool. Refusals are answered at once and change nothing.
//
// In a cluster (backend jetstream) the service serves only the pools its PoolRouting says are
// served here: a batch for another pool is refused (NOT_OWNER, UNKNOWN_POOL) before anything
// else. It gains a pool with adopt_pool(), loses one with serve_elsewhere() or when the log
// does not accept the pool's group of a window (seal()).
#pragma once

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <deque>
#include <exception>
#include <functional>
#include <map>
#include <memory>
#include <mutex>
#include <optional>
#include <set>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "batch_decoder.h"
#include "daemon/config/daemon_config.h"
#include "daemon/pools/pool_registry.h"
#include "daemon/pools/retry_ledger.h"
#include "daemon/storage/commit_log.h"
#include "pool_progress.h"
#include "pool_routing.h"
#include "repair_executor.h"
#include "service_state.h"
#include "yoke/batch_checker.h"
#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/pool.pb.h"
#include "yoke/v1/publish.pb.h"

namespace yoke::daemon {

// Identifies a request whose reply waits for the window (the server maps it to a socket peer).
using Ticket = std::uint64_t;

class PoolService {
 public:
  // `log` (its end position already past every stored window: recovery sees to it) must
  // outlive the service; the service is its only writer. The routing is PoolRouting(
  // config.cluster): every pool served here with backend local; in a cluster, none until
  // adopt_pool() (or set_routing()).
  PoolService(const DaemonConfig& config, ServiceState state, storage::CommitLog& log);

  // Replaces the routing. The pools it serves here must be those whose state the service
  // holds (or pools with no history yet). O(routing size).
  void set_routing(PoolRouting routing) { routing_ = std::move(routing); }
  const PoolRouting& routing() const { return routing_; }

  // Starts serving `pool` here with `state` (recover_pool(), or a follower's ServiceState via
  // take_pool_state()), replacing whatever the service held of it. Throws std::logic_error when
  // the open or sealed window holds batches of the pool or its repair is in flight,
  // std::invalid_argument for a pool no instance of the cluster owns. O(log pools + the pool's
  // client marks).
  void adopt_pool(const std::string& pool, PoolState state);

  // Stops serving `pool` here (when it was) and routes it to `instance` ("" = nobody serves it
  // now): its batches in the open window are refused with NOT_OWNER (the replies are
  // returned), and its state is dropped (pool, progress, retry marks). For a pool not served
  // here it only changes where refusals send clients. Not between seal() and apply(), nor
  // while its repair is in flight (throws std::logic_error then); std::invalid_argument for the local routing, for a pool no
  // instance owns, or an instance not in the cluster. O(window + log pools + marks).
  std::vector<std::pair<Ticket, v1::Ack>> serve_elsewhere(const std::string& pool,
                                                          const std::string& instance);

  // Takes one ingest message. Returns the Ack to send now for a refusal or for a retry of a
  // batch already durable; nothing when the reply comes with the window (see seal()), or when
  // the batch's pool is being repaired: the batch then waits and its answer comes from
  // finish_repairs() (a refusal, a duplicate) or with a later window.
  std::optional<v1::Ack> offer(Ticket ticket, std::string_view message);

  // Repairs go to `executor` from now on (nullptr: the inline default). Only while no repair
  // is in flight (throws std::logic_error otherwise); the executor must outlive its use.
  void set_repair_executor(RepairExecutor* executor);
  // Called on the executor's thread each time a repair has finished (the server wakes its
  // loop with it, which then calls finish_repairs()). Set it before repairs start.
  void set_repair_listener(std::function<void()> listener) { repair_listener_ = std::move(listener); }
  // A pool's engine state as a snapshot keeps it, taken on the worker right after a repair.
  struct EngineCapture {
    v1::PoolConfig config;
    Weight weight = 0;
    std::size_t pairs = 0;
    std::size_t vertices = 0;
    std::size_t edges = 0;
    std::string state;  // Pool::save()
  };
  // Asks the repair of `pool` in flight to capture the engine state it leaves, on the worker
  // (the collect listener then receives it): a snapshot started while the pool repairs saves
  // it off the loop. False when no repair of it is in flight; the capture may still be missed
  // when the repair is already past that point (the listener then receives nullptr). O(log pools).
  bool capture_after_repair(const std::string& pool);
  // Called by finish_repairs() for each pool whose repair it collects, once its progress is
  // recorded and before the batches that waited for it are checked (a snapshot in progress
  // captures the pool there), with the engine capture asked for, if it was made.
  using CollectListener = std::function<void(const std::string&, const EngineCapture*)>;
  void set_collect_listener(CollectListener listener) { collect_listener_ = std::move(listener); }
  // A repair of `pool` is in flight: its engine state belongs to the executor until
  // finish_repairs() collects it (after the repair, and after the checks of the batches that
  // arrived meanwhile, which run on the pool's strand too). O(log pools).
  bool repairing(const std::string& pool) const { return repairing_.contains(pool); }
  bool repairs_in_flight() const { return !repairing_.empty(); }
  // Batches waiting for their pool's repair (not yet in the window; checked on the strand
  // after the repair, that verdict used when the retry rules let every batch before it in).
  std::size_t held_batches() const { return held_count_; }

  bool window_empty() const { return window_.empty() && waiting_duplicates_.empty(); }
  // The open window holds a pool's retirement (RetirePool, ingest.proto): the caller should
  // close it now, so that the pool's next batches find it gone. Until apply(), batches and
  // retirements of that pool are refused with UNAVAILABLE (send again).
  bool retire_waiting() const { return !retiring_.empty() && !window_.empty(); }
  std::size_t window_events() const { return window_events_; }

  // Commits the window's batches to the log (one JournalRecord per batch, in the order they
  // were accepted; the log stamps window_start) and returns every waiting reply once they are
  // durable. Throws storage::LogError when the log cannot store them: nothing is acknowledged
  // then, and the daemon must stop (recovery keeps what was stored).
  // A pool whose group the log did not accept (CommittedWindow: another instance's claim came
  // first) is lost: its batches are refused with NOT_OWNER (nothing applied), its state is
  // dropped, the routing says nobody serves it, and its name is appended to `lost_pools`
  // when given (the server follows it from the log). Each accepted pool's last_position
  // becomes its group's position.
  std::vector<std::pair<Ticket, v1::Ack>> seal(std::vector<std::string>* lost_pools = nullptr);

  // When the window will never be sealed (seal() threw: the log failed, or the daemon stops
  // without closing it): refuses every batch of the open window and every waiting retry with
  // `error` (UNAVAILABLE) and empties the window, and so every batch waiting for its pool's
  // repair. Nothing is applied. The retry ledger still
  // names those batches, so the service must take no more batches after it. O(window).
  std::vector<std::pair<Ticket, v1::Ack>> refuse_window(const v1::Error& error);

  // Repairs each pool of the sealed window once and returns its diff, pools in name order:
  // start_apply(), wait_repairs(), finish_repairs() in one call (its replies are empty when no
  // batch waited for a repair, as always with the inline executor; a caller with worker
  // threads uses the three steps). Timings carry repair_us only; the publisher fills in the
  // rest. A pool retired in the window is not repaired: its diff says so (Diff.retired, every
  // pair removed) and its whole state goes (pool, progress, retry marks), which frees its slot
  // under max_pools.
  std::vector<v1::Diff> apply();

  // Hands each pool of the sealed window to the executor for one repair of all its batches
  // (a retirement is done here, on the caller's thread). `window_closed` comes back with each
  // diff (RepairsDone). O(window events) here; the repairs' cost on the executor.
  void start_apply(std::chrono::steady_clock::time_point window_closed =
                       std::chrono::steady_clock::now());

  struct RepairsDone {
    std::vector<v1::Diff> diffs;  // one per repair collected (and retirement), in that order
    // window_closed[i]: start_apply()'s argument for the window of diffs[i].
    std::vector<std::chrono::steady_clock::time_point> window_closed;
    // Answers to batches that waited for their pool's repair and were refused or found to be
    // duplicates when checked now; the others joined the open window.
    std::vector<std::pair<Ticket, v1::Ack>> replies;
  };
  // Collects every repair finished since the last call (progress, diffs), then takes the
  // batches waiting for pools no longer repairing, in arrival order: retry rules here, and the
  // strand's check of the batch (made as if every waiting batch before it had passed its retry
  // rules; when one did not, the batches after it are checked here again, as before worker
  // threads). Rethrows a repair's failure (the daemon must stop, as before worker threads).
  // O(collected diffs + batches' retry marks), the checks' cost on the strands.
  RepairsDone finish_repairs();

  // Blocks until every repair in flight has finished (finish_repairs() then collects them).
  void wait_repairs();

  PoolRegistry& registry() { return state_.registry; }
  const PoolProgress* progress(const std::string& pool) const;
  PoolProgress& progress_of(const std::string& pool) { return state_.progress[pool]; }
  const RetryLedger& ledger() const { return state_.ledger; }
  storage::CommitLog& log() { return log_; }
  // The log position after every window committed: a snapshot now is named by it.
  std::uint64_t next_journal_position() const { return log_.end_position(); }

  // Refusals by error code over the daemon's life: of batches and of messages not read as one
  // (refuses_unread_message tells them apart).
  const std::map<v1::Error::Code, std::uint64_t>& refusals() const { return refusals_; }

 private:
  // A waiting batch's events lent to its pool's strand, which checks them after the repair
  // against the pool plus the waiting batches it accepted before (RepairJob::precheck).
  struct HeldCheck {
    std::vector<Event> events;
    std::optional<EventError> verdict;
    bool checked = false;
  };
  // The strand's verdict on a waiting batch, handed to offer_decoded(), which says whether the
  // batch got as far as its check (`used`): if not, the strand's checker holds a batch the
  // window does not.
  struct Prechecked {
    const std::optional<EventError>* verdict;
    bool used = false;
  };
  struct PendingBatch {
    Ticket ticket;
    std::uint64_t seq;
    DecodedBatch batch;
  };
  struct WindowPool {
    std::uint64_t seq_before;  // the pool's seq when the window opened
    std::uint64_t next_seq;    // the seq the next batch of this pool would get
    BatchChecker checker;
  };

  // One pool's repair as the executor runs it, and its result.
  struct RepairJob {
    std::string pool;
    Pool* engine = nullptr;
    // The window's batches of the pool, moved here by the loop; the worker joins them into
    // one commit (the copy and the frees are its, not the loop's).
    std::vector<std::vector<Event>> batches_events;
    std::uint64_t last_seq = 0;
    std::uint64_t seq_before = 0;
    std::uint64_t batches = 0;
    std::chrono::steady_clock::time_point window_closed;
    CommitResult result;  // its MatchingDiff emptied once `diff` is built
    v1::Diff diff;        // the worker's, from `result`
    std::uint64_t repair_us = 0;
    std::exception_ptr failure;
    std::atomic<bool> capture_wanted{false};  // set by the loop, read by the worker
    std::optional<EngineCapture> captured;    // the worker's, read by the loop once collected
    // Tasks given to the strand for this pool (the repair, then checks), and those ended:
    // collected when equal. Both guarded by finished_mutex_.
    std::size_t tasks_posted = 0;
    std::size_t tasks_ended = 0;
    bool prechecks_stopped = false;  // the loop's: a retirement waits, later batches are its
    // The strand's checker over the pool after the repair plus the waiting batches it
    // accepted; the loop's once collected (the next window's checker when the retry rules
    // agreed with every verdict). Empty after a check failed. Before the repair: the sealed
    // window's checker, handed over so that the worker, not the loop, clears its tables.
    std::optional<BatchChecker> precheck;
    bool precheck_failed = false;
  };
  struct HeldBatch {
    Ticket ticket;
    DecodedBatch batch;  // its events lent to `check` while the strand has them
    std::shared_ptr<HeldCheck> check;  // null: checked on the loop once collected
  };

  v1::Ack refuse(v1::Ack ack);
  // offer() once the batch is decoded and its pool is not repairing; with `prechecked`, the
  // strand's verdict stands for the check.
  std::optional<v1::Ack> offer_decoded(Ticket ticket, DecodedBatch batch,
                                       Prechecked* prechecked = nullptr);
  // A batch for a pool whose repair is in flight: kept, and its check queued on the strand.
  void hold(Ticket ticket, DecodedBatch batch, const std::shared_ptr<RepairJob>& job);
  // The batches that waited for `pool`'s repair, in arrival order, with the strand's checker.
  void offer_held(const std::string& pool, std::deque<HeldBatch> waiting,
                  std::optional<BatchChecker> prechecked,
                  std::vector<std::pair<Ticket, v1::Ack>>& replies);
  // Gives `task` to `job`'s strand, counted so that the job is collected after it.
  void post_task(const std::shared_ptr<RepairJob>& job, std::function<void()> task);
  // Runs on the executor: the repair, then the hand back.
  void run_repair(const std::shared_ptr<RepairJob>& job);
  // Runs on the executor after the repair: one waiting batch checked.
  static void precheck(RepairJob& job, HeldCheck& check);
  // A job whose every task ended (under finished_mutex_).
  static bool tasks_ended(const RepairJob& job) { return job.tasks_ended == job.tasks_posted; }
  std::optional<v1::Ack> offer_retire(Ticket ticket, DecodedBatch batch);
  // The retry and after_batch rules (events.proto, EventBatch) for a batch naming its client:
  // nothing when the batch is new and may enter the window; otherwise offer()'s answer (a
  // refusal, a duplicate's Ack, or no Ack yet for a retry of a batch in the open window).
  std::optional<std::optional<v1::Ack>> apply_retry_rule(Ticket ticket, const DecodedBatch& batch);
  WindowPool& window_pool(const std::string& name, Pool& pool);
  // Refuses the pool's batches of the open window and their waiting retries (NOT_OWNER, as the
  // routing says), and drops its state.
  void drop_pool(const std::string& pool, std::vector<std::pair<Ticket, v1::Ack>>& replies);
  bool sealed_holds(const std::string& pool) const;

  InputLimits limits_;
  ServiceState state_;
  PoolRouting routing_;
  storage::CommitLog& log_;
  std::vector<PendingBatch> window_;
  std::map<std::string, WindowPool> window_pools_;
  std::vector<std::pair<Ticket, v1::Ack>> waiting_duplicates_;  // retries of batches in the window
  std::vector<PendingBatch> sealed_;
  std::map<std::string, std::uint64_t> sealed_seq_before_;
  std::map<std::string, BatchChecker> sealed_checkers_;  // the sealed window's, for its repairs
  std::set<std::string> retiring_;  // pools retired by the open or sealed window
  std::size_t window_events_ = 0;
  std::map<v1::Error::Code, std::uint64_t> refusals_;

  InlineRepairs inline_repairs_;
  RepairExecutor* executor_ = &inline_repairs_;
  std::function<void()> repair_listener_;
  CollectListener collect_listener_;
  std::map<std::string, std::shared_ptr<RepairJob>> repairing_;  // handed to the executor
  std::map<std::string, std::deque<HeldBatch>> held_;  // batches waiting for those pools
  std::size_t held_count_ = 0;
  RepairsDone retired_;  // retirements done by start_apply(), not yet collected (no replies)
  std::mutex finished_mutex_;  // guards the jobs' task counts (the executor's threads end tasks)
  std::condition_variable finished_signal_;
};

}  // namespace yoke::daemon
