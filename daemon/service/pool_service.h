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
#include "diff_recycler.h"
#include "pool_progress.h"
#include "pool_routing.h"
#include "repair_executor.h"
#include "sealed_records.h"
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
  // batch already durable; nothing when the reply comes with the window (see seal()). A batch
  // for a pool whose repair is in flight is checked here too, against the pool as staged so far
  // (Pool::stage) plus the windows sealed after it (their checker, kept here) plus the open
  // window, and joins the window. It waits instead, and its answer comes from finish_repairs()
  // (a refusal, a duplicate) or with a later window, while a window of the pool is being staged
  // (a worker writes the topology then), while its latest window in flight, handed over with
  // nothing of the pool before it, is not staged yet (its checker is the worker's), when its
  // check finds a limit exceeded before the pool's windows are all staged (the edge count is
  // exact only then), for a retirement or in a cluster (then while any repair is in
  // flight), and behind a retirement of the pool not yet applied.
  //
  // A message of kDecodeOffLoopBytes or more that is a new pool's first batch, by its envelope
  // alone (read_batch_envelope), is decoded on a worker as well as checked (FirstCheck): the
  // message's bytes then outlive the call, kept by `keep` (its owner, taken from the caller
  // without a copy) or, without it, copied. A decode refusal comes back as the Ack this call
  // would have returned, from finish_repairs(), and the pool's later batches wait behind it.
  struct KeptMessage {
    std::shared_ptr<const void> owner;  // keeps `bytes` alive
    std::string_view bytes;
  };
  using KeepMessage = std::function<KeptMessage()>;
  std::optional<v1::Ack> offer(Ticket ticket, std::string_view message,
                               const KeepMessage& keep = {});

  // Repairs go to `executor` from now on (nullptr: the inline default). Only while no repair
  // is in flight (throws std::logic_error otherwise); the executor must outlive its use.
  void set_repair_executor(RepairExecutor* executor);
  // Called on the executor's thread each time a repair has finished (the server wakes its
  // loop with it, which then calls finish_repairs()). Set it before repairs start.
  void set_repair_listener(std::function<void()> listener) { repair_listener_ = std::move(listener); }
  // A pool's engine state as a snapshot keeps it, taken on a worker (or by the caller).
  struct EngineCapture {
    v1::PoolConfig config;
    Weight weight = 0;
    std::size_t pairs = 0;
    std::size_t vertices = 0;
    std::size_t edges = 0;
    std::string state;  // Pool::save()
    std::exception_ptr failure;  // Pool::save() threw: nothing else holds
  };
  // `pool`'s engine state now, on the caller's thread (a failure is kept, not thrown).
  // O(the pool's state).
  static EngineCapture capture_engine(const Pool& pool);
  // Asks for `pool`'s engine state, as the log's end now leaves it, to be captured on a worker
  // (the collect listener then receives it), never by this call: a snapshot so saves no pool
  // on the loop. A pool repairing: by its last repair in flight, right after it. A free pool
  // (or one whose last repair is past that point): by a capture-only job on its strand, which
  // counts as a repair in flight until collected (repairing()): its next windows' stages
  // queue behind it, its retirement and queries wait for it, its batches are checked
  // meanwhile (the capture only reads the pool, as the checks do). False, and nothing asked,
  // with the inline executor, for a pool the log holds nothing of, and for one retiring in
  // the open window (the caller captures those itself). O(log pools).
  bool capture_on_worker(const std::string& pool);
  // Asks for `pool`'s certificate prices (Pool::make_certificate_prices: with the phantom
  // vertex, a search once per commit) to be made on a worker by a read-only job on its strand,
  // as a capture-only job is, when the next explanation would pay that search
  // (Pool::certificate_prices_due): a query held until the job is collected then reads them
  // without the search on the loop. False, and nothing asked, with the inline executor, for a
  // pool missing, retiring in the open window, with a repair in flight (the query waits for it
  // first: ask again then), or whose prices are made. O(log pools).
  bool prices_on_worker(const std::string& pool);
  // Called by finish_repairs() for each job it collects that was asked for a capture, with
  // it (its `failure` set when save() threw; a job whose repair failed is not reported: the
  // daemon stops), once its progress is recorded and before the batches that waited for it
  // are checked. The listener may take the capture's contents (the job is dropped after it).
  using CollectListener = std::function<void(const std::string&, EngineCapture*)>;
  void set_collect_listener(CollectListener listener) { collect_listener_ = std::move(listener); }
  // A repair of `pool` is in flight (one per sealed window of it, in seq order, and a
  // snapshot's capture-only job: capture_on_worker()): its engine state belongs to the
  // executor until finish_repairs() collects the last, but for the topology the batch checks
  // read once the last is staged (offer()). O(log pools).
  bool repairing(const std::string& pool) const { return repairing_.contains(pool); }
  bool repairs_in_flight() const { return !repairing_.empty() || !first_checks_.empty(); }
  // Someone waits for the engine of `pool` (a query held until its repairs are collected):
  // until they are, its batches wait as in a cluster instead of joining windows, so that no
  // repair of it is handed over after those in flight. Nothing when it is not repairing.
  void drain(const std::string& pool) {
    if (repairing(pool)) draining_.insert(pool);
  }
  // Batches waiting for their pool's engine (offer()), not yet checked nor in the window.
  std::size_t held_batches() const { return held_count_; }
  // Keys the pool's newest checker holds beside the pool (BatchChecker::entries; 0 when it
  // has none): the memory its chain of windows in flight takes.
  std::size_t checker_entries(const std::string& pool) {
    const BatchChecker* checker = chain_checker(pool);
    return checker == nullptr ? 0 : checker->entries();
  }

  bool window_empty() const { return window_.empty() && waiting_duplicates_.empty(); }
  // The open window holds a pool's retirement (RetirePool, ingest.proto): the caller should
  // close it now, so that the pool's next batches find it gone. Until start_apply() drops the
  // pool, batches and retirements of that pool wait (held_batches()); finish_repairs() then
  // offers them, in arrival order, to the pool made afresh.
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
  // begin_seal(), the log's commit() and end_seal() in one call, on the caller's thread.
  std::vector<std::pair<Ticket, v1::Ack>> seal(std::vector<std::string>* lost_pools = nullptr);

  // seal() in two steps, for a caller that makes the window durable on another thread (the server's
  // JournalThread): begin_seal() returns the window's records for CommitLog::commit() (their events
  // written in by SealedRecords::encode() or complete(), on the committing thread) and opens the
  // next window at once; end_seal() takes what commit() stored and returns the replies, as seal()
  // does. Meanwhile (syncing()) batches join the next window, checked on top of the syncing one's
  // (a pool's checker goes on to the next window as on a chained one), but for a retirement, and
  // every batch in a cluster, of a pool in the syncing window: they wait (offered by
  // finish_repairs() after start_apply()). A retry of a syncing batch is answered by end_seal().
  // One window syncs at a time; the caller must not touch the log meanwhile
  // (next_journal_position() included). The retry ledger's horizon moves at begin_seal(), with the
  // records' wall time: the ledger then holds exactly the marks a replay up to this window holds.
  // If commit() throws, refuse_window() answers the syncing window too. O(window).
  SealedRecords begin_seal();
  std::vector<std::pair<Ticket, v1::Ack>> end_seal(const storage::CommittedWindow& committed,
                                                   std::vector<std::string>* lost_pools = nullptr);
  bool syncing() const { return syncing_.active; }

  // When the window will never be sealed (seal() threw: the log failed, or the daemon stops
  // without closing it): refuses every batch of the syncing window (begin_seal() without its
  // end_seal()) and of the open window and every waiting retry with `error` (UNAVAILABLE) and
  // empties both windows, and so every batch waiting for its pool's repair. Nothing is
  // applied. The retry ledger still names those batches, so the service must take no more
  // batches after it. O(window).
  std::vector<std::pair<Ticket, v1::Ack>> refuse_window(const v1::Error& error);

  // Repairs each pool of the sealed window once and returns its diff, pools in name order:
  // start_apply(), wait_repairs(), finish_repairs() in one call (its replies are dropped: they
  // are empty when no batch waited for a repair or behind a retirement; a caller with worker
  // threads or retirements uses the three steps). Timings carry repair_us only; the publisher fills in the
  // rest. A pool retired in the window is not repaired: its diff says so (Diff.retired, every
  // pair removed) and its whole state goes (pool, progress, retry marks), which frees its slot
  // under max_pools.
  std::vector<v1::Diff> apply();

  // Hands each pool of the sealed window to the executor for one repair of all its batches,
  // behind the pool's repairs already in flight (a retirement is done here, on the caller's
  // thread; its pool has none). `window_closed` comes back with each diff (RepairsDone).
  // O(window events) here; the repairs' cost on the executor.
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
  // Collects every repair finished since the last call (progress, diffs), then offers the
  // batches that need not wait any more (their pool's window staged, or its repairs over), in
  // arrival order, as offer() would. Rethrows a repair's failure (the daemon must stop, as
  // before worker threads). O(collected diffs + the offered batches' checks).
  RepairsDone finish_repairs();

  // Blocks until every repair in flight has finished (finish_repairs() then collects them).
  void wait_repairs();

  // Hands back a diff of finish_repairs() once published: a later repair's diff is made in it
  // (DiffRecycler), without allocating its pairs again. Optional. O(its pairs).
  void reuse_diff(v1::Diff&& diff) { diff_recycler_.give(std::move(diff)); }

  // The pool's last seq in the log: the sealed window's, its last repair's in flight, or its
  // progress's (0: none). O(sealed window + log pools).
  std::uint64_t journalled_seq(const std::string& pool) const;

  PoolRegistry& registry() { return state_.registry; }
  const PoolProgress* progress(const std::string& pool) const;
  PoolProgress& progress_of(const std::string& pool) { return state_.progress[pool]; }
  const RetryLedger& ledger() const { return state_.ledger; }
  storage::CommitLog& log() { return log_; }
  // The log position after every window committed: a snapshot now is named by it. Not while
  // a window syncs (the log is the committing thread's then).
  std::uint64_t next_journal_position() const { return log_.end_position(); }

  // Refusals by error code over the daemon's life: of batches and of messages not read as one
  // (refuses_unread_message tells them apart).
  const std::map<v1::Error::Code, std::uint64_t>& refusals() const { return refusals_; }

 private:
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

  // One pool's commit of one sealed window as the executor runs it, in two tasks on the pool's
  // strand: stage (the batches' changes of vertices, edges and holds; Pool::stage) and repair.
  struct RepairJob {
    std::string pool;
    Pool* engine = nullptr;
    // The window's batches of the pool, moved here by the loop; the worker joins them into
    // one commit (the copy and the frees are its, not the loop's).
    std::vector<std::vector<Event>> batches_events;
    std::uint64_t events = 0;  // in batches_events, kept once they are moved (back-pressure)
    std::uint64_t last_seq = 0;
    std::uint64_t seq_before = 0;
    std::uint64_t batches = 0;
    std::chrono::steady_clock::time_point window_closed;
    // The pool's job handed over before this one, until this one starts: a failed repair
    // leaves the engine broken, so the jobs after it fail too (the daemon stops).
    std::shared_ptr<RepairJob> after;
    CommitResult result;  // its MatchingDiff emptied once `diff` is built
    v1::Diff diff;        // the worker's, from `result`
    std::uint64_t repair_us = 0;
    std::exception_ptr failure;
    // The sealed window's checker, handed over so that the worker, not the loop, clears its
    // tables: emptied once the window is staged, then the loop's (window_pool()). Only when no
    // earlier window of the pool was in flight: otherwise the checker stays on the loop
    // (chained_checkers_), the base of the next window's checks, and `chained` is set.
    std::optional<BatchChecker> checker;
    bool chained = false;
    // The loop's: the window's count change in the chained checker, until the loop has
    // subtracted it from there (once it sees the window staged: count_off_staged()).
    std::optional<BatchChecker::CountChange> chained_counts;
    // The pool's, shared by its jobs: held by the worker while it stages a window, and tried by
    // the loop around a check that reads the pool while its repairs are in flight.
    std::shared_ptr<std::mutex> stage_mutex;
    bool stage_failed = false;  // written under stage_mutex
    // Stored by the worker once the window is staged, after its last write of the pool's
    // topology and of `checker`: from then on the loop may check batches against the pool
    // (Pool::stage's promise) and take `checker`. The loop sets wake_when_staged before it
    // holds a batch for that, and looks at staged again after (both seq_cst: one of the two
    // threads sees the other's store).
    std::atomic<bool> staged{false};
    std::atomic<bool> wake_when_staged{false};
    // Tasks given to the strand for this job (stage, repair), and those ended: collected when
    // equal. Guarded by finished_mutex_, as the capture's three fields.
    std::size_t tasks_posted = 0;
    std::size_t tasks_ended = 0;
    bool capture_wanted = false;            // set by the loop before capture_passed
    bool capture_passed = false;            // the worker touches the engine no more
    std::optional<EngineCapture> captured;  // read by the loop once collected
    // A read-only job (capture_on_worker(), prices_on_worker()): no window, one task that
    // saves the engine or makes its certificate prices (`make_prices`), or both. Born staged
    // (it changes no topology) with no events, seq_before = last_seq = the pool's.
    bool read_only = false;
    bool make_prices = false;
  };
  struct HeldBatch {
    Ticket ticket;
    DecodedBatch batch;
  };
  // A new pool's first batch of kFirstCheckOffLoop events or more, checked on a worker (on the
  // loop its check would hold every other pool's batches): the pool made aside and the
  // checker holding the batch come back with the verdict, and the loop offers the batch with
  // them (offer_decoded); the pool's next batches wait behind it. A message of
  // kDecodeOffLoopBytes or more is decoded there too (`decode`): `batch` then holds only the
  // names its envelope gave, and the worker writes `decoded` and `refusal`. The worker reads
  // only batch.events, `message`, engine and checker, and writes only the fields after them,
  // until `ended` (guarded by finished_mutex_).
  //
  // A later batch of kLaterCheckOffLoop events or more (or a message of kDecodeLaterOffLoopBytes
  // or more) of a pool that exists goes the same way when nothing of the pool waits on the
  // loop and every window of it is staged, so that its topology holds everything before the
  // batch (later_check_may_run()): `existing` is then the pool, which the worker only reads
  // (as the loop's checks read it during a repair), with a new checker; the pool's next
  // batches, and its retirement, wait behind it, so nothing stages a window of it meanwhile.
  // It runs beside the pool's repairs (check_strand()), not behind them.
  struct FirstCheck {
    Ticket ticket = 0;
    DecodedBatch batch;
    std::unique_ptr<Pool> engine;
    const Pool* existing = nullptr;
    bool decode = false;
    std::string_view message;  // to decode, kept alive by message_owner (dropped once decoded)
    std::shared_ptr<const void> message_owner;
    std::optional<BatchChecker> checker;
    std::optional<EventError> verdict;
    DecodedBatch decoded;
    std::optional<v1::Ack> refusal;  // decode_ingest's
    // Decoded as some other pool's or client's batch than its envelope said (a bug of
    // read_batch_envelope): not checked, offered afresh as a decoded message.
    bool not_as_announced = false;
    std::exception_ptr failure;
    bool ended = false;
  };
  static constexpr std::size_t kFirstCheckOffLoop = 4096;
  // An event takes 8 to 30 bytes on the wire: past this, a message may hold kFirstCheckOffLoop.
  static constexpr std::size_t kDecodeOffLoopBytes = 16 * kFirstCheckOffLoop;
  // A later batch's check costs the loop ~0.2 us per event (8x10^5 events: 140 ms of the
  // loop, perf, session 15); below this it stays there (~3 ms), with no hand-off.
  static constexpr std::size_t kLaterCheckOffLoop = 1u << 14;
  static constexpr std::size_t kDecodeLaterOffLoopBytes = 16 * kLaterCheckOffLoop;

  v1::Ack refuse(v1::Ack ack);
  // offer() once the batch is decoded and its pool's topology may be read here; with `first`,
  // its pool, checker and verdict stand for the new pool and the check.
  std::optional<v1::Ack> offer_decoded(Ticket ticket, DecodedBatch batch,
                                       FirstCheck* first = nullptr);
  // offer() once the message is decoded.
  std::optional<v1::Ack> offer_batch(Ticket ticket, DecodedBatch batch);
  // Hands a new pool's big first batch to a worker for its check (FirstCheck); false (the
  // batch untouched) when it is not one, or with the inline executor.
  bool check_first_batch_off_loop(Ticket ticket, DecodedBatch& batch);
  // The same for a big message, by its envelope, to be decoded there too; false (nothing
  // taken) when it is not one.
  bool decode_first_batch_off_loop(Ticket ticket, std::string_view message,
                                   const KeepMessage& keep);
  // `pool` is new, and its first batch may be checked on a worker (nothing of it held,
  // pending, retiring; room for it).
  bool first_check_may_run(const std::string& pool);
  // `pool` exists and a batch of it may be checked on a worker against its topology alone
  // (FirstCheck::existing): nothing of it in a window (open, syncing, sealed), every window of
  // it staged. The caller sees that nothing of it is held before the batch (as for
  // first_check_may_run()).
  bool later_check_may_run(const std::string& pool);
  // The pool, for such a check: its chained checker, if any, emptied (it says nothing the
  // staged pool does not) and kept as its spare.
  const Pool* pool_for_later_check(const std::string& pool);
  // The executor's key for a later batch's check: a strand beside the pool's own (a name no
  // pool has), so that the check does not wait for the repairs in flight.
  static std::string check_strand(const std::string& pool) { return pool + " check"; }
  void run_first_check(const std::shared_ptr<FirstCheck>& check);
  // Drops the pool's chained and spare checkers, before the pool they read goes or is replaced.
  void drop_kept_checkers(const std::string& pool);
  // The first checks ended since the last call, offered (finish_repairs()).
  void offer_first_checks(std::vector<std::pair<Ticket, v1::Ack>>& replies);
  // A batch that must wait for its pool's engine: a job of the pool is still staging its
  // window (or, for a retirement and in a cluster, any job is in flight), or a retirement of
  // the pool is not applied yet. Asks that job to wake the loop once staged.
  bool waits_for_engine(const DecodedBatch& batch);
  // A batch that would make a pool while every slot under max_pools is taken, counting those
  // the new pools whose first batches came earlier and are still checked on workers will take
  // (slots go in arrival order), or sent after a retirement not yet applied: it waits for those
  // checks and retirements, as the retired pool's own batches do (ingest.proto, RetirePool),
  // instead of taking an earlier batch's slot or being refused early.
  bool waits_for_a_slot(const DecodedBatch& batch);
  // New pools not declared in the config whose first batch is checked on a worker.
  std::size_t new_pools_being_checked();
  // Offers the held batches of every pool that no longer has to wait, in arrival order.
  void offer_held(std::vector<std::pair<Ticket, v1::Ack>>& replies);
  static bool every_job_staged(const std::deque<std::shared_ptr<RepairJob>>& jobs);
  // The pool's windows in flight not yet staged hold max_events_behind_ events or more: its
  // next batches wait, and the first of those windows wakes the loop once it is staged. A
  // staged window's events are in the engine already, and the next window syncs while it
  // repairs, so that the worker finds it queued (no pause for the seal and the sync).
  bool too_far_behind(const std::deque<std::shared_ptr<RepairJob>>& jobs);
  // `job` of the pool is not staged yet; asks it to wake the loop once it is (false: it is).
  bool waits_for_stage(RepairJob& job);
  // Holds `batch`, first of its pool's waiting batches, until `job` is staged (offer_decoded
  // found the stage lock taken, or a limit exceeded while windows were not staged).
  void hold_for_stage(Ticket ticket, DecodedBatch batch, const std::shared_ptr<RepairJob>& job);
  // Subtracts from `checker` the counts of the chained windows now staged (under the pool's
  // stage lock, or once their jobs ended).
  static void count_off_staged(const std::deque<std::shared_ptr<RepairJob>>& jobs,
                               BatchChecker& checker);
  // The checker that holds the pool's chained windows: the open window's, the sealed one's, or
  // the one kept between windows; nullptr when none.
  BatchChecker* chain_checker(const std::string& pool);
  // Gives `task` to `job`'s strand, counted so that the job is collected after it.
  void post_task(const std::shared_ptr<RepairJob>& job, std::function<void()> task);
  // Run on the executor: the window's batches staged in the engine, then the repair.
  void stage_window(RepairJob& job);
  void repair_window(RepairJob& job);
  // Hands `pool` a read-only job behind whatever it has in flight, and its one task: a
  // capture, or the certificate prices.
  void post_read_only(const std::string& pool, bool capture);
  void read_alone(RepairJob& job);
  // A job whose every task ended (under finished_mutex_).
  static bool tasks_ended(const RepairJob& job) { return job.tasks_ended == job.tasks_posted; }
  std::optional<v1::Ack> offer_retire(Ticket ticket, DecodedBatch batch);
  // The retry and after_batch rules (events.proto, EventBatch) for a batch naming its client:
  // nothing when the batch is new and may enter the window; otherwise offer()'s answer (a
  // refusal, a duplicate's Ack, or no Ack yet for a retry of a batch in the open window).
  std::optional<std::optional<v1::Ack>> apply_retry_rule(Ticket ticket, const DecodedBatch& batch);
  // The pool's last seq given to a batch before the open window: its syncing window's, or
  // journalled_seq().
  std::uint64_t seq_before_window(const std::string& pool) const;
  WindowPool& window_pool(const std::string& name, Pool& pool);
  // Forgets the syncing window (end_seal(): handed on; refuse_window(): refused).
  void end_syncing();
  // Refuses the pool's batches of the open window and their waiting retries (NOT_OWNER, as the
  // routing says), and drops its state.
  void drop_pool(const std::string& pool, std::vector<std::pair<Ticket, v1::Ack>>& replies);
  bool sealed_holds(const std::string& pool) const;

  InputLimits limits_;
  // A pool's batches wait (held, unacknowledged) while its windows in flight not yet staged
  // hold this many events: kWindowsBehind full windows ([batching] max_events each). One: a
  // window queued behind the repairing one keeps the worker busy, and what arrives meanwhile
  // makes the next window, not several smaller ones (a commit's cost per event falls with its
  // size; smaller windows also cost the loop more).
  static constexpr std::uint64_t kWindowsBehind = 1;
  std::uint64_t max_events_behind_;
  // A pool's chained checker keeps the keys of every window it checked until one finds the
  // windows before it staged (window_pool() empties it then). Past this many entries, the
  // pool's next window waits for that (waits_for_engine()): its memory stays within a bound
  // of the events in flight, whatever keys a long run brings (every arriving vertex id). Small
  // (a few MB of tables): under steady load the chain lives for many windows, and checks in
  // tables of 10^5 entries miss the cache (until session 12, 16 per event + 2^18:
  // DEVELOPERS.md).
  static constexpr std::uint64_t kChainedEntriesPerEventBehind = 1;
  static constexpr std::uint64_t kChainedEntriesFloor = 1u << 15;
  std::uint64_t max_chained_entries_;
  ServiceState state_;
  PoolRouting routing_;
  storage::CommitLog& log_;
  std::vector<PendingBatch> window_;
  std::map<std::string, WindowPool> window_pools_;
  std::vector<std::pair<Ticket, v1::Ack>> waiting_duplicates_;  // retries of batches in the window
  std::vector<PendingBatch> sealed_;
  std::map<std::string, std::uint64_t> sealed_seq_before_;
  std::map<std::string, BatchChecker> sealed_checkers_;  // the sealed window's, for its repairs
  // A pool's latest window's checker, kept on the loop when that window was handed over behind
  // another of the pool's (start_apply()): the next window checks on top of it.
  std::map<std::string, BatchChecker> chained_checkers_;
  // A pool's emptied checker that no window took (its job was collected after the next window
  // opened with a new one): the next new window takes it, so that its tables are not grown
  // again from nothing. Dropped with the pool's state (it reads the pool).
  std::map<std::string, BatchChecker> spare_checkers_;
  std::set<std::string> retiring_;  // pools retired by the open, syncing or sealed window
  // The window between begin_seal() and end_seal(), forgotten whole by end_syncing().
  struct SyncingWindow {
    bool active = false;
    std::vector<PendingBatch> batches;  // seq order per pool
    std::vector<std::pair<Ticket, v1::Ack>> duplicates;  // retries of them
    std::map<std::string, std::uint64_t> seq_before;  // each pool's seq before the window
    std::map<std::string, std::uint64_t> last_seq;    // each pool's last seq in it
    // Its checkers, until the next window takes them (window_pool(), which keeps the count
    // change of the window for start_apply()).
    std::map<std::string, BatchChecker> checkers;
  };
  SyncingWindow syncing_;
  std::map<std::string, BatchChecker::CountChange> taken_counts_;
  std::size_t window_events_ = 0;
  std::map<v1::Error::Code, std::uint64_t> refusals_;

  InlineRepairs inline_repairs_;
  RepairExecutor* executor_ = &inline_repairs_;
  std::function<void()> repair_listener_;
  CollectListener collect_listener_;
  // Handed to the executor, per pool in the order handed (the strand's).
  std::map<std::string, std::deque<std::shared_ptr<RepairJob>>> repairing_;
  std::map<std::string, std::deque<HeldBatch>> held_;  // batches waiting for those pools
  std::set<std::string> draining_;  // pools whose batches wait until their repairs are over
  // Pools whose first held batch waits for that job's stage (hold_for_stage()).
  std::map<std::string, std::shared_ptr<RepairJob>> stage_waits_;
  std::map<std::string, std::shared_ptr<FirstCheck>> first_checks_;  // on the workers
  std::size_t held_count_ = 0;
  // Retirements among the held batches, per pool (waits_for_a_slot).
  std::map<std::string, std::size_t> held_retirements_;
  RepairsDone retired_;  // retirements done by start_apply(), not yet collected (no replies)
  std::mutex finished_mutex_;  // guards the jobs' task counts (the executor's threads end tasks)
  std::condition_variable finished_signal_;
  DiffRecycler diff_recycler_;  // published diffs given back (the loop), taken by the workers
};

}  // namespace yoke::daemon
