#include "pool_service.h"

#include <algorithm>
#include <chrono>
#include <set>
#include <stdexcept>

#include "daemon/pools/pool_names.h"
#include "diff_message.h"
#include "ingest_envelope.h"
#include "unix_time.h"
#include "wire_types.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {
namespace {

v1::Ack ack_for(const DecodedBatch& batch) {
  return batch_ack(batch.client_id, batch.client_batch, batch.pool);
}

v1::Ack rejected(const DecodedBatch& batch, v1::Error error) {
  return refused(ack_for(batch), std::move(error));
}

}  // namespace

PoolService::PoolService(const DaemonConfig& config, ServiceState state, storage::CommitLog& log)
    : limits_(config.limits),
      max_events_behind_(kWindowsBehind * config.batching.max_events),
      max_chained_entries_(kChainedEntriesPerEventBehind * max_events_behind_ +
                           kChainedEntriesFloor),
      state_(std::move(state)),
      routing_(config.cluster),
      log_(log) {}

bool PoolService::sealed_holds(const std::string& pool) const {
  return syncing_.seq_before.contains(pool) ||
         std::any_of(sealed_.begin(), sealed_.end(),
                     [&pool](const PendingBatch& pending) { return pending.batch.pool == pool; });
}

void PoolService::drop_kept_checkers(const std::string& pool) {
  chained_checkers_.erase(pool);
  spare_checkers_.erase(pool);
}

void PoolService::adopt_pool(const std::string& pool, PoolState state) {
  if (window_pools_.contains(pool) || sealed_holds(pool) || repairing(pool)) {
    throw std::logic_error("pool " + pool +
                           " cannot be adopted while the window holds its batches");
  }
  if (!routing_.serves_every_pool()) routing_.serve_here(pool);
  drop_kept_checkers(pool);
  put_pool_state(state_, pool, std::move(state));
}

std::vector<std::pair<Ticket, v1::Ack>> PoolService::serve_elsewhere(const std::string& pool,
                                                                     const std::string& instance) {
  if (sealed_holds(pool) || repairing(pool)) {
    throw std::logic_error("pool " + pool +
                           " cannot be given up between seal() and the end of its repair");
  }
  const bool was_here = routing_.serving(pool) == Serving::here;
  if (instance.empty()) {
    routing_.serve_nobody(pool);
  } else {
    routing_.serve_elsewhere(pool, instance);
  }
  std::vector<std::pair<Ticket, v1::Ack>> replies;
  if (was_here) drop_pool(pool, replies);
  return replies;
}

void PoolService::drop_pool(const std::string& pool,
                            std::vector<std::pair<Ticket, v1::Ack>>& replies) {
  const v1::Error error = routing_.refusal(pool, Asked::ingest)
                              .value_or(make_error(v1::Error::NOT_OWNER,
                                                   "the commit log did not accept the batches of "
                                                   "pool " + pool + ": nothing was applied"));
  // The syncing window's (end_seal(): the log did not accept its group) before the open one's.
  std::erase_if(syncing_.batches, [&](PendingBatch& pending) {
    if (pending.batch.pool != pool) return false;
    replies.emplace_back(pending.ticket, refuse(rejected(pending.batch, error)));
    return true;
  });
  std::erase_if(window_, [&](PendingBatch& pending) {
    if (pending.batch.pool != pool) return false;
    window_events_ -= pending.batch.events.size();
    replies.emplace_back(pending.ticket, refuse(rejected(pending.batch, error)));
    return true;
  });
  for (auto* waiting : {&syncing_.duplicates, &waiting_duplicates_}) {
    std::erase_if(*waiting, [&](std::pair<Ticket, v1::Ack>& entry) {
      const v1::Ack& ack = entry.second;
      if (ack.pool() != pool) return false;
      v1::Ack refusal = refused(batch_ack(ack.client_id(), ack.client_batch(), pool), error);
      replies.emplace_back(entry.first, refuse(std::move(refusal)));
      return true;
    });
  }
  window_pools_.erase(pool);  // before the pool: its checker reads it
  drop_kept_checkers(pool);
  syncing_.checkers.erase(pool);
  syncing_.seq_before.erase(pool);
  syncing_.last_seq.erase(pool);
  taken_counts_.erase(pool);
  take_pool_state(state_, pool);
  if (!repairing(pool)) executor_->forget(pool);  // dropped only with no repair in flight
}

const PoolProgress* PoolService::progress(const std::string& pool) const {
  const auto it = state_.progress.find(pool);
  return it == state_.progress.end() ? nullptr : &it->second;
}

v1::Ack PoolService::refuse(v1::Ack ack) {
  for (const v1::Error& error : ack.rejected().errors()) ++refusals_[error.code()];
  if (!ack.pool().empty()) {
    if (auto it = state_.progress.find(ack.pool()); it != state_.progress.end()) {
      ++it->second.batches_rejected;
    }
  }
  return ack;
}

std::optional<v1::Ack> PoolService::offer(Ticket ticket, std::string_view message,
                                          const KeepMessage& keep) {
  if (decode_first_batch_off_loop(ticket, message, keep)) return std::nullopt;
  DecodeResult decoded = decode_ingest(message, limits_);
  if (auto* refusal = std::get_if<v1::Ack>(&decoded)) return refuse(std::move(*refusal));
  return offer_batch(ticket, std::move(std::get<DecodedBatch>(decoded)));
}

std::optional<v1::Ack> PoolService::offer_batch(Ticket ticket, DecodedBatch batch) {
  if (held_.contains(batch.pool) || waits_for_engine(batch)) {
    // Answered once its pool's engine lets it be checked (finish_repairs()), in arrival order.
    if (batch.retire) ++held_retirements_[batch.pool];
    held_[batch.pool].push_back(HeldBatch{ticket, std::move(batch)});
    ++held_count_;
    return std::nullopt;
  }
  if (check_first_batch_off_loop(ticket, batch)) return std::nullopt;
  return offer_decoded(ticket, std::move(batch));
}

bool PoolService::first_check_may_run(const std::string& pool) {
  return executor_ != &inline_repairs_ && routing_.serves_every_pool() &&
         !retiring_.contains(pool) && state_.registry.find(pool) == nullptr &&
         state_.registry.may_create(pool, limits_.max_pools);
}

bool PoolService::later_check_may_run(const std::string& pool) {
  if (executor_ == &inline_repairs_ || !routing_.serves_every_pool() || retiring_.contains(pool) ||
      state_.registry.find(pool) == nullptr || first_checks_.contains(pool) ||
      draining_.contains(pool) || stage_waits_.contains(pool) ||
      window_pools_.contains(pool) || sealed_holds(pool) || syncing_.checkers.contains(pool) ||
      sealed_checkers_.contains(pool)) {
    return false;
  }
  // Staged, a window's batches are all in the topology (a repair does not change it).
  const auto jobs = repairing_.find(pool);
  return jobs == repairing_.end() || every_job_staged(jobs->second);
}

const Pool* PoolService::pool_for_later_check(const std::string& pool) {
  if (auto chained = chained_checkers_.find(pool); chained != chained_checkers_.end()) {
    // Every window it holds is staged: it knows nothing the pool does not (as window_pool()
    // finds it). Its jobs' counts come off it, not off the window the batch will open.
    if (const auto jobs = repairing_.find(pool); jobs != repairing_.end()) {
      count_off_staged(jobs->second, chained->second);
    }
    chained->second.clear();
    spare_checkers_.insert_or_assign(pool, std::move(chained->second));
    chained_checkers_.erase(chained);
  }
  return state_.registry.find(pool);
}

bool PoolService::check_first_batch_off_loop(Ticket ticket, DecodedBatch& batch) {
  if (batch.retire || batch.events.size() < kFirstCheckOffLoop) return false;
  auto check = std::make_shared<FirstCheck>();
  if (first_check_may_run(batch.pool)) {
    check->engine = state_.registry.make_aside(batch.pool);
  } else if (batch.events.size() >= kLaterCheckOffLoop && later_check_may_run(batch.pool)) {
    check->existing = pool_for_later_check(batch.pool);
  } else {
    return false;
  }
  check->ticket = ticket;
  check->batch = std::move(batch);
  run_first_check(check);
  return true;
}

bool PoolService::decode_first_batch_off_loop(Ticket ticket, std::string_view message,
                                              const KeepMessage& keep) {
  // Cheap tests first: most messages are small, and a refusal for size is the loop's at once.
  if (executor_ == &inline_repairs_ || message.size() < kDecodeOffLoopBytes ||
      message.size() > limits_.max_message_bytes) {
    return false;
  }
  std::optional<BatchEnvelope> envelope = read_batch_envelope(message);
  // Names decode_ingest would refuse are refused on the loop, as ever (before the events).
  if (!envelope || envelope->client_id.size() > kMaxClientIdBytes) return false;
  DecodedBatch names;
  names.pool = resolve_pool_name(envelope->pool);
  if (pool_name_problem(names.pool)) return false;
  if (held_.contains(names.pool) || waits_for_engine(names)) return false;
  const bool fresh = first_check_may_run(names.pool);
  if (!fresh &&
      (message.size() < kDecodeLaterOffLoopBytes || !later_check_may_run(names.pool))) {
    return false;
  }
  names.client_id = std::move(envelope->client_id);
  names.client_batch = envelope->client_batch;
  auto check = std::make_shared<FirstCheck>();
  check->ticket = ticket;
  if (fresh) {
    check->engine = state_.registry.make_aside(names.pool);
  } else {
    check->existing = pool_for_later_check(names.pool);
  }
  check->batch = std::move(names);
  check->decode = true;
  if (keep) {
    KeptMessage kept = keep();
    check->message = kept.bytes;
    check->message_owner = std::move(kept.owner);
  } else {
    auto copy = std::make_shared<const std::string>(message);
    check->message = *copy;
    check->message_owner = std::move(copy);
  }
  run_first_check(check);
  return true;
}

void PoolService::run_first_check(const std::shared_ptr<FirstCheck>& check) {
  first_checks_.emplace(check->batch.pool, check);
  ++held_count_;
  const std::string strand =
      check->existing != nullptr ? check_strand(check->batch.pool) : check->batch.pool;
  executor_->run(strand, [this, check, limits = limits_] {
    try {
      DecodedBatch* checked = &check->batch;  // or the batch decoded here from the message
      if (check->decode) {
        DecodeResult decoded = decode_ingest(check->message, limits);
        check->message = {};
        check->message_owner.reset();  // the message's bytes freed here, not on the loop
        if (auto* refusal = std::get_if<v1::Ack>(&decoded)) {
          check->refusal = std::move(*refusal);
        } else {
          check->decoded = std::move(std::get<DecodedBatch>(decoded));
          const DecodedBatch& announced = check->batch;
          check->not_as_announced =
              check->decoded.retire || check->decoded.pool != announced.pool ||
              check->decoded.client_id != announced.client_id ||
              check->decoded.client_batch != announced.client_batch;
          checked = &check->decoded;
        }
      }
      if (!check->refusal && !check->not_as_announced) {
        check->checker.emplace(check->existing != nullptr ? *check->existing : *check->engine);
        check->verdict = check->checker->accept(checked->events);
        // Its journal bytes too, here: encoded on the journal thread and copied on the loop,
        // a base graph's events held every pool's next window (and acknowledgements) behind
        // them for tens of milliseconds.
        if (!check->verdict) checked->journal_events = encode_events(checked->events);
      }
    } catch (...) {
      check->failure = std::current_exception();
    }
    {
      const std::lock_guard lock(finished_mutex_);
      check->ended = true;
    }
    finished_signal_.notify_all();
    if (repair_listener_) repair_listener_();
  });
}

std::size_t PoolService::new_pools_being_checked() {
  std::size_t checked = 0;
  for (const auto& [pool, check] : first_checks_) {
    // `existing` is set before the worker starts and never changed: read here without a race.
    if (check->existing == nullptr && !state_.registry.is_declared(pool)) ++checked;
  }
  return checked;
}

bool PoolService::waits_for_a_slot(const DecodedBatch& batch) {
  if (batch.retire || (first_checks_.empty() && retiring_.empty() && held_retirements_.empty())) {
    return false;  // nothing on its way could take a slot or give one back
  }
  if (state_.registry.is_declared(batch.pool) || state_.registry.find(batch.pool) != nullptr) {
    return false;  // a slot of its own
  }
  // Slots go in arrival order: the first batches of new pools still checked on workers came
  // first, so each holds a slot until its check ends.
  const std::size_t checked = new_pools_being_checked();
  if (checked < limits_.max_pools &&
      state_.registry.may_create(batch.pool, limits_.max_pools - checked)) {
    return false;
  }
  // None free: wait while a check in flight may be refused or a retirement may free one. A
  // retirement held behind its pool's work is offered once that ends, but one of a pool that
  // does not exist frees nothing (its pool's batches before it may be waiting for a slot
  // themselves: waiting for it would wait for ever).
  if (checked > 0 || !retiring_.empty()) return true;
  return std::any_of(held_retirements_.begin(), held_retirements_.end(), [this](const auto& held) {
    return state_.registry.find(held.first) != nullptr;
  });
}

bool PoolService::waits_for_engine(const DecodedBatch& batch) {
  if (first_checks_.contains(batch.pool)) return true;  // behind the pool's first batch
  if (waits_for_a_slot(batch)) return true;
  // Behind a retirement: for the pool that comes after it, once start_apply() has dropped the
  // old one (ingest.proto, RetirePool). finish_repairs() offers it then, right after.
  if (retiring_.contains(batch.pool)) return true;
  // A retirement drops the engine (and may meet a checker the syncing window left), and a
  // cluster may lose the pool at end_seal(): neither while the pool's window syncs.
  if ((batch.retire || !routing_.serves_every_pool()) && syncing_.seq_before.contains(batch.pool)) {
    return true;
  }
  const auto jobs = repairing_.find(batch.pool);
  if (jobs == repairing_.end()) return false;
  if (!window_pools_.contains(batch.pool)) {
    // A new window would take the chained checker: grown past its bound, it waits for the
    // pool's windows to be staged, and starts empty then (window_pool()). A syncing window
    // with batches of the pool becomes a job whose end offers the held batches again.
    const BatchChecker* chain = chain_checker(batch.pool);
    if (chain != nullptr && chain->entries() > max_chained_entries_) {
      if (syncing_.last_seq.contains(batch.pool)) return true;
      for (const std::shared_ptr<RepairJob>& job : jobs->second) {
        if (waits_for_stage(*job)) return true;  // woken when that one is staged
      }
    }
  }
  // A retirement drops the engine, and a cluster may drop a pool at seal() (lost): neither
  // while a worker holds it.
  if (batch.retire || !routing_.serves_every_pool() || draining_.contains(batch.pool)) {
    return true;
  }
  if (const auto wait = stage_waits_.find(batch.pool); wait != stage_waits_.end()) {
    if (waits_for_stage(*wait->second)) return true;
    stage_waits_.erase(wait);
  }
  // Back-pressure: acknowledgements keep pace with the stages, and memory stays bounded.
  if (too_far_behind(jobs->second)) return true;
  // The pool's latest window handed over with its checker: staged, so are the jobs before it
  // (one strand). A chained one is checked under the stage lock instead (offer_decoded()).
  RepairJob& last = *jobs->second.back();
  return !last.chained && waits_for_stage(last);
}

bool PoolService::too_far_behind(const std::deque<std::shared_ptr<RepairJob>>& jobs) {
  std::uint64_t unstaged = 0;
  for (const std::shared_ptr<RepairJob>& job : jobs) {
    if (!job->staged.load(std::memory_order_acquire)) unstaged += job->events;
  }
  if (unstaged < max_events_behind_) return false;
  // Woken when the first of them is staged (one strand: the others come after it).
  for (const std::shared_ptr<RepairJob>& job : jobs) {
    if (waits_for_stage(*job)) return true;
  }
  return false;  // all staged meanwhile
}

bool PoolService::every_job_staged(const std::deque<std::shared_ptr<RepairJob>>& jobs) {
  // Each asked (not only the last): a job that stages nothing may be born staged.
  return std::all_of(jobs.begin(), jobs.end(), [](const std::shared_ptr<RepairJob>& job) {
    return job->staged.load(std::memory_order_acquire);
  });
}

bool PoolService::waits_for_stage(RepairJob& job) {
  if (job.staged.load(std::memory_order_acquire)) return false;
  job.wake_when_staged.store(true);
  return !job.staged.load();
}

void PoolService::hold_for_stage(Ticket ticket, DecodedBatch batch,
                                 const std::shared_ptr<RepairJob>& job) {
  const std::string pool = batch.pool;
  held_[pool].push_front(HeldBatch{ticket, std::move(batch)});  // it came before those held
  ++held_count_;
  stage_waits_[pool] = job;
  // Staged meanwhile (the worker may have looked at the flag before it was set): the loop is
  // woken all the same, to offer it again.
  if (!waits_for_stage(*job) && repair_listener_) repair_listener_();
}

void PoolService::count_off_staged(const std::deque<std::shared_ptr<RepairJob>>& jobs,
                                   BatchChecker& checker) {
  for (const std::shared_ptr<RepairJob>& job : jobs) {
    if (job->chained_counts && job->staged.load(std::memory_order_acquire)) {
      checker.window_staged(*job->chained_counts);
      job->chained_counts.reset();
    }
  }
}

BatchChecker* PoolService::chain_checker(const std::string& pool) {
  if (const auto it = window_pools_.find(pool); it != window_pools_.end()) return &it->second.checker;
  if (const auto it = syncing_.checkers.find(pool); it != syncing_.checkers.end()) {
    return &it->second;
  }
  if (const auto it = sealed_checkers_.find(pool); it != sealed_checkers_.end()) return &it->second;
  if (const auto it = chained_checkers_.find(pool); it != chained_checkers_.end()) return &it->second;
  return nullptr;
}

std::optional<v1::Ack> PoolService::offer_decoded(Ticket ticket, DecodedBatch batch,
                                                  FirstCheck* first) {
  if (retiring_.contains(batch.pool)) {  // waits_for_engine() holds such a batch
    throw std::logic_error("a batch of pool " + batch.pool + " offered before its retirement "
                           "was applied");
  }
  if (batch.retire) return offer_retire(ticket, std::move(batch));
  if (!routing_.serves_every_pool()) {  // the local backend: one test, nothing looked up
    if (auto not_here = routing_.refusal(batch.pool, Asked::ingest)) {
      return refuse(rejected(batch, std::move(*not_here)));
    }
  }

  // A pool named for the first time is made aside and kept only if the batch is accepted: a
  // refusal changes nothing, not even the pools there are (nor their count, for max_pools).
  Pool* pool = state_.registry.find(batch.pool);
  // The pool's batches waited behind its first one: nothing made it meanwhile (and a later
  // batch's pool is the one checked, with nothing of it in a window).
  if (first != nullptr && (pool != first->existing || window_pools_.contains(batch.pool))) {
    first = nullptr;
  }
  std::unique_ptr<Pool> created;
  if (pool == nullptr) {
    if (!state_.registry.may_create(batch.pool, limits_.max_pools)) {
      return refuse(rejected(
          batch, make_error(v1::Error::UNKNOWN_POOL,
                            "pool " + batch.pool + " may not be created: the daemon holds " +
                                std::to_string(state_.registry.undeclared_size()) +
                                " pools not declared in its config, all the slots of its "
                                "limit of " + std::to_string(limits_.max_pools) +
                                " pools that its " +
                                std::to_string(state_.registry.declared_count()) +
                                " declared pools leave (retire one to free a slot)")));
    }
    created = first != nullptr ? std::move(first->engine) : state_.registry.make_aside(batch.pool);
    pool = created.get();
  }
  if (!batch.client_id.empty()) {
    if (auto answer = apply_retry_rule(ticket, batch)) return std::move(*answer);
  }

  std::optional<EventError> error;
  WindowPool* window_entry = nullptr;
  if (first != nullptr) {
    // The worker's checker holds the batch when it accepted it: the window's.
    const std::uint64_t seq = first->existing != nullptr ? seq_before_window(batch.pool) : 0;
    window_entry =
        &window_pools_.emplace(batch.pool, WindowPool{seq, seq + 1, std::move(*first->checker)})
             .first->second;
    error = std::move(first->verdict);
  } else {
    window_entry = &window_pool(batch.pool, *pool);
    // While the pool's repairs are in flight the checker reads the topology its windows staged
    // so far (Pool::stage), which a repair does not change, but a stage does: not meanwhile.
    std::unique_lock<std::mutex> stage_lock;
    const auto jobs = repairing_.find(batch.pool);
    if (jobs != repairing_.end()) {
      stage_lock = std::unique_lock(*jobs->second.front()->stage_mutex, std::try_to_lock);
      const auto unstaged = std::find_if(
          jobs->second.begin(), jobs->second.end(),
          [](const auto& job) { return !job->staged.load(std::memory_order_acquire); });
      if (!stage_lock.owns_lock() ||
          (unstaged != jobs->second.end() && (*unstaged)->stage_failed)) {
        // The stage under way (the first not staged, or the last: staged, not yet unlocked).
        hold_for_stage(ticket, std::move(batch),
                       unstaged != jobs->second.end() ? *unstaged : jobs->second.back());
        return std::nullopt;
      }
      count_off_staged(jobs->second, window_entry->checker);
      error = window_entry->checker.accept(batch.events);
      // Before every window is staged the edge count is an upper bound over theirs too: a
      // refusal for a limit waits for them, to be the one a staged pool gives.
      if (error && error->code == EventErrorCode::limit_exceeded &&
          unstaged != jobs->second.end()) {
        hold_for_stage(ticket, std::move(batch), jobs->second.back());
        return std::nullopt;
      }
    } else {
      error = window_entry->checker.accept(batch.events);
    }
  }
  WindowPool& in_window = *window_entry;
  if (error) {
    if (created) window_pools_.erase(batch.pool);  // its checker reads the pool dropped here
    return refuse(rejected(batch, make_error(to_wire(error->code), std::move(error->message),
                                             static_cast<std::uint32_t>(error->index))));
  }
  if (created) state_.registry.put(batch.pool, std::move(created));  // the checker's pool stays
  state_.progress.try_emplace(batch.pool);
  const std::uint64_t seq = in_window.next_seq++;
  if (!batch.client_id.empty()) {
    // Recorded now, before it is durable: a retry arriving within this window must be seen as
    // one. If the journal fails the daemon stops, and recovery rebuilds the ledger from disk.
    state_.ledger.record(batch.pool, batch.client_id, {batch.client_batch, seq});
  }
  window_events_ += batch.events.size();
  window_.push_back({ticket, seq, std::move(batch)});
  return std::nullopt;
}

std::optional<v1::Ack> PoolService::offer_retire(Ticket ticket, DecodedBatch batch) {
  if (!routing_.serves_every_pool()) {
    return refuse(rejected(batch, make_error(v1::Error::RETIRE_NOT_SUPPORTED,
                                             "pools are not retired by a daemon of a cluster "
                                             "(backend jetstream): pool " + batch.pool +
                                                 " is unchanged")));
  }
  Pool* pool = state_.registry.find(batch.pool);
  if (pool == nullptr) {
    return refuse(rejected(batch, make_error(v1::Error::UNKNOWN_POOL,
                                             "there is no pool " + batch.pool +
                                                 " to retire (never created, or retired "
                                                 "already)")));
  }
  WindowPool& in_window = window_pool(batch.pool, *pool);
  const std::uint64_t last_seq = in_window.next_seq - 1;
  if (batch.at_seq != 0 && batch.at_seq != last_seq) {
    if (in_window.next_seq == in_window.seq_before + 1) window_pools_.erase(batch.pool);
    return refuse(rejected(batch, make_error(v1::Error::SEQ_MISMATCH,
                                             "pool " + batch.pool + " is at seq " +
                                                 std::to_string(last_seq) + ", not at seq " +
                                                 std::to_string(batch.at_seq) +
                                                 ": not retired")));
  }
  const std::uint64_t seq = in_window.next_seq++;
  retiring_.insert(batch.pool);
  window_.push_back({ticket, seq, std::move(batch)});
  return std::nullopt;
}

std::optional<std::optional<v1::Ack>> PoolService::apply_retry_rule(Ticket ticket,
                                                                    const DecodedBatch& batch) {
  const RetryAnswer answer =
      state_.ledger.classify(batch.pool, batch.client_id, batch.client_batch);
  const auto with_last = [&answer](v1::Error error) {
    if (answer.highest) error.set_last_batch(answer.highest->batch_number);
    return error;
  };
  const std::string number = std::to_string(batch.client_batch);
  const std::string highest =
      answer.highest ? std::to_string(answer.highest->batch_number) : std::string("none");
  switch (answer.verdict) {
    case RetryVerdict::duplicate: {
      ++state_.progress[batch.pool].batches_duplicate;
      v1::Ack ack = accepted(ack_for(batch), answer.seq, true);
      if (answer.seq > journalled_seq(batch.pool)) {  // not durable yet: answered once it is
        const auto syncing = syncing_.last_seq.find(batch.pool);
        const bool in_syncing = syncing != syncing_.last_seq.end() && answer.seq <= syncing->second;
        auto& waiting = in_syncing ? syncing_.duplicates : waiting_duplicates_;
        waiting.emplace_back(ticket, std::move(ack));
        return std::optional<v1::Ack>();
      }
      return std::optional<v1::Ack>(std::move(ack));
    }
    case RetryVerdict::skipped:
      return refuse(rejected(
          batch, with_last(make_error(v1::Error::BATCH_SKIPPED,
                                      "batch " + number + " of client " + batch.client_id +
                                          " was never applied and the client's highest applied "
                                          "batch is " + highest +
                                          ": nothing applied; send its events under a number "
                                          "above " + highest))));
    case RetryVerdict::forgotten:
      return refuse(rejected(
          batch, with_last(make_error(v1::Error::BATCH_FORGOTTEN,
                                      "batch " + number + " of client " + batch.client_id +
                                          " is older than the batches the daemon remembers (the "
                                          "client's highest applied batch is " + highest +
                                          "): whether it was applied is not known; nothing "
                                          "applied now"))));
    case RetryVerdict::fresh: break;
  }
  if (batch.after_batch != 0 &&
      (!answer.highest || answer.highest->batch_number != batch.after_batch)) {
    return refuse(rejected(
        batch, with_last(make_error(v1::Error::OUT_OF_ORDER,
                                    "batch " + number + " must follow batch " +
                                        std::to_string(batch.after_batch) +
                                        ", but the last applied is " + highest +
                                        ": resend from the first batch not acknowledged"))));
  }
  return std::nullopt;
}

std::uint64_t PoolService::journalled_seq(const std::string& pool) const {
  // Between seal() and start_apply(): the sealed window's batches are the latest.
  for (auto it = sealed_.rbegin(); it != sealed_.rend(); ++it) {
    if (it->batch.pool == pool) return it->seq;
  }
  if (const auto jobs = repairing_.find(pool); jobs != repairing_.end()) {
    return jobs->second.back()->last_seq;
  }
  const auto progress = state_.progress.find(pool);
  return progress == state_.progress.end() ? 0 : progress->second.seq;
}

std::uint64_t PoolService::seq_before_window(const std::string& pool) const {
  const auto syncing = syncing_.last_seq.find(pool);
  return syncing != syncing_.last_seq.end() ? syncing->second : journalled_seq(pool);
}

PoolService::WindowPool& PoolService::window_pool(const std::string& name, Pool& pool) {
  auto it = window_pools_.find(name);
  if (it == window_pools_.end()) {
    const std::uint64_t seq = seq_before_window(name);
    std::optional<BatchChecker> checker;
    if (auto syncing = syncing_.checkers.find(name); syncing != syncing_.checkers.end()) {
      // It holds the syncing window's batches, not yet in the pool: this window checks on top
      // of them, and start_apply() makes that window's repair a chained one with this count.
      taken_counts_.insert_or_assign(name, syncing->second.end_window());
      checker.emplace(std::move(syncing->second));
      syncing_.checkers.erase(syncing);
    } else if (auto chained = chained_checkers_.find(name); chained != chained_checkers_.end()) {
      checker.emplace(std::move(chained->second));
      chained_checkers_.erase(chained);
      const auto jobs = repairing_.find(name);
      if (jobs == repairing_.end() || every_job_staged(jobs->second)) {
        // Every window it holds is in the pool's topology now (a repair does not change that):
        // it knows nothing the pool does not, and starts empty. Chained from window to window
        // while repairs lag, it would otherwise keep every key their batches touched.
        if (jobs != repairing_.end()) count_off_staged(jobs->second, *checker);
        checker->clear();
      }
    } else if (const auto jobs = repairing_.find(name); jobs != repairing_.end()) {
      // The last window in flight's checker, emptied by its worker once staged, is this one's.
      RepairJob& last = *jobs->second.back();
      if (last.staged.load(std::memory_order_acquire) && last.checker) {
        checker.emplace(std::move(*last.checker));
        last.checker.reset();
      }
    }
    if (auto spare = spare_checkers_.find(name); !checker && spare != spare_checkers_.end()) {
      checker.emplace(std::move(spare->second));  // empty: it says nothing the pool does not
      spare_checkers_.erase(spare);
    }
    if (!checker) checker.emplace(pool);
    it = window_pools_.emplace(name, WindowPool{seq, seq + 1, std::move(*checker)}).first;
  }
  return it->second;
}

std::vector<std::pair<Ticket, v1::Ack>> PoolService::seal(
    std::vector<std::string>* lost_pools) {
  // Durable on return: only then are the acks sent.
  const storage::CommittedWindow committed = log_.commit(begin_seal().complete());
  return end_seal(committed, lost_pools);
}

SealedRecords PoolService::begin_seal() {
  if (syncing_.active) throw std::logic_error("a window is syncing already: one at a time");
  const std::uint64_t wall_time = unix_time_us();
  SealedRecords sealed;
  sealed.records.reserve(window_.size());
  sealed.events.reserve(window_.size());
  for (PendingBatch& pending : window_) {
    DecodedBatch& batch = pending.batch;
    v1::JournalRecord& record = sealed.records.emplace_back();
    if (!batch.journal_events.empty()) {
      // Encoded on a worker already: the loop copies no event of a big batch.
      sealed.encoded.resize(sealed.records.size());
      sealed.encoded.back() = std::move(batch.journal_events);
      sealed.events.emplace_back();
    } else {
      sealed.events.push_back(batch.events);  // a copy: the repair takes the batch's own
    }
    record.set_pool(batch.pool);
    record.set_seq(pending.seq);
    record.set_client_id(batch.client_id);
    record.set_client_batch(batch.client_batch);
    record.set_wall_time_unix_us(wall_time);
    record.set_retired(batch.retire);
    if (pending.seq == 1 && !batch.retire) {
      const Pool& pool = *state_.registry.find(batch.pool);
      *record.mutable_created() = pool_config(pool);
    }
    syncing_.last_seq[batch.pool] = pending.seq;
  }
  for (auto& [name, in_window] : window_pools_) {
    syncing_.seq_before[name] = in_window.seq_before;
    // The ledger's horizon moves with the log, as recovery's replay of this group will move it:
    // now, before the next window's batches add marks a replay would not have yet.
    if (syncing_.last_seq.contains(name)) {
      state_.ledger.close_group(name, in_window.seq_before + 1, wall_time);
    }
    syncing_.checkers.insert_or_assign(name, std::move(in_window.checker));
  }
  window_pools_.clear();
  syncing_.batches = std::move(window_);
  window_.clear();
  syncing_.duplicates = std::move(waiting_duplicates_);
  waiting_duplicates_.clear();
  window_events_ = 0;
  syncing_.active = true;
  return sealed;
}

std::vector<std::pair<Ticket, v1::Ack>> PoolService::end_seal(
    const storage::CommittedWindow& committed, std::vector<std::string>* lost_pools) {
  if (!syncing_.active) throw std::logic_error("end_seal() without a window syncing");
  std::vector<std::pair<Ticket, v1::Ack>> replies;
  replies.reserve(syncing_.batches.size() + syncing_.duplicates.size());
  std::set<std::string> lost;
  for (const storage::CommittedGroup& group : committed.groups) {
    if (!group.accepted) {
      lost.insert(group.pool);
    } else if (auto it = state_.progress.find(group.pool); it != state_.progress.end()) {
      it->second.last_position = group.position;
      // Recovery's replay gives the group holding seq 1 the same position (apply_commit_group).
      const auto before = syncing_.seq_before.find(group.pool);
      if (before != syncing_.seq_before.end() && before->second == 0) {
        it->second.incarnation = group.position;
      }
    }
  }
  for (const std::string& pool : lost) {
    // Another instance's claim came first in the log: the pool is no longer ours.
    if (routing_.serving(pool) == Serving::here && !routing_.serves_every_pool()) {
      routing_.serve_nobody(pool);
    }
    drop_pool(pool, replies);
    if (lost_pools != nullptr) lost_pools->push_back(pool);
  }

  for (const PendingBatch& pending : syncing_.batches) {
    replies.emplace_back(pending.ticket, accepted(ack_for(pending.batch), pending.seq, false));
  }
  for (auto& waiting : syncing_.duplicates) replies.push_back(std::move(waiting));
  for (const auto& [name, seq_before] : syncing_.seq_before) sealed_seq_before_[name] = seq_before;
  // The checkers read the pools, which apply() is about to change: each goes to its pool's
  // repair, whose worker clears it for the batches that arrive meanwhile (those the next
  // window took stay there: taken_counts_).
  for (auto& [name, checker] : syncing_.checkers) {
    sealed_checkers_.insert_or_assign(name, std::move(checker));
  }
  for (PendingBatch& pending : syncing_.batches) sealed_.push_back(std::move(pending));
  end_syncing();
  return replies;
}

void PoolService::end_syncing() { syncing_ = SyncingWindow(); }

std::vector<std::pair<Ticket, v1::Ack>> PoolService::refuse_window(const v1::Error& error) {
  std::vector<std::pair<Ticket, v1::Ack>> replies;
  for (const auto* batches : {&syncing_.batches, &window_}) {
    for (const PendingBatch& pending : *batches) {
      replies.emplace_back(pending.ticket, refuse(refused(ack_for(pending.batch), error)));
    }
  }
  for (const auto* waiting : {&syncing_.duplicates, &waiting_duplicates_}) {
    for (const auto& [ticket, ack] : *waiting) {
      replies.emplace_back(ticket, refuse(refused(
                                       batch_ack(ack.client_id(), ack.client_batch(), ack.pool()),
                                       error)));
    }
  }
  for (auto& [pool, waiting] : held_) {
    for (const HeldBatch& held : waiting) {
      replies.emplace_back(held.ticket, refuse(refused(ack_for(held.batch), error)));
    }
  }
  held_.clear();
  held_retirements_.clear();
  stage_waits_.clear();
  // A worker may still be checking: it reads the batch's events, not its names.
  for (const auto& [pool, check] : first_checks_) {
    replies.emplace_back(check->ticket, refuse(refused(ack_for(check->batch), error)));
  }
  first_checks_.clear();
  held_count_ = 0;
  window_.clear();
  waiting_duplicates_.clear();
  window_pools_.clear();
  window_events_ = 0;
  end_syncing();
  taken_counts_.clear();  // no repair follows to count them off
  return replies;
}

}  // namespace yoke::daemon
