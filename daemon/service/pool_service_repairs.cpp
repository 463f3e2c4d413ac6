// PoolService's repairs: handing each pool of a sealed window to the executor, and collecting
// what comes back (pool_service.h says who may touch what while a repair is in flight).
#include <algorithm>
#include <chrono>
#include <map>
#include <optional>
#include <queue>
#include <stdexcept>
#include <string>
#include <vector>

#include "diff_message.h"
#include "wire_types.h"
#include "pool_service.h"

namespace yoke::daemon {
namespace {

std::uint64_t micros_since(std::chrono::steady_clock::time_point start) {
  return static_cast<std::uint64_t>(std::chrono::duration_cast<std::chrono::microseconds>(
                                        std::chrono::steady_clock::now() - start)
                                        .count());
}

// A window's events joined for Pool::stage: each thread's buffer, kept from window to window
// up to this many events.
constexpr std::size_t kKeptJoinedEvents = std::size_t{1} << 17;

std::vector<Event>& joined_buffer() {
  thread_local std::vector<Event> buffer;
  return buffer;
}

}  // namespace

void PoolService::set_repair_executor(RepairExecutor* executor) {
  if (repairs_in_flight()) {
    throw std::logic_error("the repair executor cannot change while repairs are in flight");
  }
  executor_ = executor != nullptr ? executor : &inline_repairs_;
}

std::vector<v1::Diff> PoolService::apply() {
  start_apply();
  wait_repairs();
  RepairsDone done = finish_repairs();
  // One window's diffs in a fixed order, whichever repair finished first.
  std::sort(done.diffs.begin(), done.diffs.end(),
            [](const v1::Diff& a, const v1::Diff& b) { return a.pool() < b.pool(); });
  return std::move(done.diffs);
}

void PoolService::start_apply(std::chrono::steady_clock::time_point window_closed) {
  std::map<std::string, std::shared_ptr<RepairJob>> jobs;  // name order
  std::set<std::string> retired;
  for (PendingBatch& pending : sealed_) {
    std::shared_ptr<RepairJob>& job = jobs[pending.batch.pool];
    if (!job) {
      job = std::make_shared<RepairJob>();
      job->pool = pending.batch.pool;
      job->window_closed = window_closed;
    }
    job->events += pending.batch.events.size();
    job->batches_events.push_back(std::move(pending.batch.events));
    job->last_seq = pending.seq;
    ++job->batches;
    // Its last entry retires it (always the last: seal() closes the window there).
    if (pending.batch.retire) retired.insert(pending.batch.pool);
  }
  sealed_.clear();
  // Only the sealed window's: a retirement in the next window (begin_seal() opened it) stays.
  for (const std::string& name : retired) retiring_.erase(name);

  for (auto& [name, job] : jobs) {
    job->seq_before = sealed_seq_before_[name];
    Pool& pool = *state_.registry.find(name);
    if (retired.contains(name)) {
      if (repairing(name)) {  // offer() holds a retirement until the pool's repairs are over
        throw std::logic_error("pool " + name + " was retired while its repair is in flight");
      }
      // Nothing to repair: the pool ends here (the window's batches before the retirement are
      // in the journal, and replay drops them with the pool as this does).
      retired_.diffs.push_back(diff_of_retirement(name, pool, job->last_seq, job->seq_before));
      retired_.diffs.back().set_incarnation(state_.progress[name].incarnation);
      retired_.window_closed.push_back(window_closed);
      drop_kept_checkers(name);
      take_pool_state(state_, name);
      executor_->forget(name);  // nothing of it in flight (above)
      continue;
    }
    std::deque<std::shared_ptr<RepairJob>>& in_flight = repairing_[name];
    const bool behind = !in_flight.empty();
    if (behind) job->after = in_flight.back();
    job->stage_mutex = behind ? in_flight.back()->stage_mutex : std::make_shared<std::mutex>();
    in_flight.push_back(job);
    job->engine = &pool;
    if (auto checker = sealed_checkers_.find(name); checker != sealed_checkers_.end()) {
      if (behind) {
        // Its stage waits for the repairs before it: the pool's next batches are checked on
        // top of this checker meanwhile, which then counts this window until it is staged.
        job->chained = true;
        job->chained_counts = checker->second.end_window();
        chained_checkers_.insert_or_assign(name, std::move(checker->second));
      } else {
        job->checker.emplace(std::move(checker->second));
      }
      sealed_checkers_.erase(checker);
    } else if (auto taken = taken_counts_.find(name); taken != taken_counts_.end()) {
      // The next window took its checker while it synced (window_pool()): checked on top of
      // this window, which that checker counts until it is staged, as a chained window.
      job->chained = true;
      job->chained_counts = taken->second;
    }
  }
  taken_counts_.clear();  // the others' windows held no batch: nothing to count off
  sealed_seq_before_.clear();
  // Left: a retired pool's, dropped; and those of pools whose batches in the window were all
  // refused or held, kept: they may still hold windows that are not staged.
  for (auto& [name, checker] : sealed_checkers_) {
    if (!retired.contains(name)) chained_checkers_.insert_or_assign(name, std::move(checker));
  }
  sealed_checkers_.clear();
  for (auto& [name, pool_job] : jobs) {
    if (pool_job->engine == nullptr) continue;
    // A copy of the binding to capture (clang 14 cannot capture a structured binding).
    std::shared_ptr<RepairJob> job = pool_job;
    post_task(job, [this, job] { stage_window(*job); });
    post_task(job, [this, job] { repair_window(*job); });
  }
}

void PoolService::post_task(const std::shared_ptr<RepairJob>& job, std::function<void()> task) {
  {
    const std::lock_guard lock(finished_mutex_);
    ++job->tasks_posted;
  }
  executor_->run(job->pool, [this, job, task = std::move(task)] {
    task();
    bool all_ended = false;
    {
      const std::lock_guard lock(finished_mutex_);
      ++job->tasks_ended;
      all_ended = tasks_ended(*job);
    }
    if (!all_ended) return;  // the last task to end wakes the loop
    finished_signal_.notify_all();
    if (repair_listener_) repair_listener_();
  });
}

void PoolService::stage_window(RepairJob& job) {
  const auto start = std::chrono::steady_clock::now();
  try {
    if (job.after && job.after->failure) {
      throw std::runtime_error("pool " + job.pool + ": an earlier repair failed");
    }
    job.after.reset();  // ended before this task began (one strand): no chain of jobs is kept
    std::size_t total = 0;
    for (const std::vector<Event>& events : job.batches_events) total += events.size();
    // Joined in a buffer the thread keeps, so that its pages are not zeroed anew each window.
    std::vector<Event>& joined = joined_buffer();
    joined.clear();
    joined.reserve(total);
    for (const std::vector<Event>& events : job.batches_events) {
      joined.insert(joined.end(), events.begin(), events.end());
    }
    job.batches_events.clear();
    // The loop checks batches against the pool while its repairs run, never while it stages.
    const std::lock_guard stage_lock(*job.stage_mutex);
    try {
      job.engine->stage(joined);
    } catch (...) {
      job.stage_failed = true;
      throw;
    }
    // One far bigger than a window (a new pool's base graph) is not kept.
    if (joined.capacity() > kKeptJoinedEvents) std::vector<Event>().swap(joined);
    // The sealed window's checker, now that its batches are in the pool's topology: emptied
    // here, off the loop, it is the next window's (window_pool()) once `staged` says so.
    if (job.checker) job.checker->clear();
    job.staged.store(true);  // seq_cst, against the loop's wake_when_staged (waits_for_stage)
  } catch (...) {
    job.failure = std::current_exception();
  }
  job.repair_us = micros_since(start);
  if (job.failure) return;  // the loop waits for the end of the job, and then stops
  if (job.wake_when_staged.load() && repair_listener_) repair_listener_();
}

void PoolService::repair_window(RepairJob& job) {
  const auto start = std::chrono::steady_clock::now();
  if (!job.failure) {
    try {
      job.result = job.engine->repair();
    } catch (...) {
      job.failure = std::current_exception();
    }
  }
  job.repair_us += micros_since(start);
  if (!job.failure) {
    // The published diff is built here, off the loop; the loop's progress says the same
    // no_perfect_matching (PoolProgress::record_commit).
    job.diff = diff_of_commit(job.pool, job.result, job.last_seq, job.seq_before,
                              job.result.status == SolveStatus::no_perfect_matching, job.repair_us,
                              diff_recycler_.take());
    job.result.diff = MatchingDiff();  // its pairs are in the message now: freed here too
  }
  bool capture = false;
  {
    const std::lock_guard lock(finished_mutex_);
    job.capture_passed = true;
    capture = job.capture_wanted && !job.failure;
  }
  if (capture) job.captured = capture_engine(*job.engine);
}

PoolService::EngineCapture PoolService::capture_engine(const Pool& pool) {
  EngineCapture capture;
  try {
    capture = EngineCapture{pool_config(pool),   pool.weight(),     pool.pairs(),
                            pool.vertex_count(), pool.edge_count(), pool.save(), nullptr};
  } catch (...) {
    capture.failure = std::current_exception();  // the snapshot fails, serving goes on
  }
  return capture;
}

bool PoolService::capture_on_worker(const std::string& pool) {
  // Inline, a job would run here and now anyway; a pool retiring in the open window would
  // hold its retirement behind the job, which start_apply() cannot do.
  if (executor_ == &inline_repairs_ || retiring_.contains(pool)) return false;
  if (const auto jobs = repairing_.find(pool); jobs != repairing_.end()) {
    RepairJob& job = *jobs->second.back();
    const std::lock_guard lock(finished_mutex_);
    if (job.capture_wanted) return true;  // asked already (a capture-only job is born asked)
    if (!job.capture_passed) {
      job.capture_wanted = true;  // the worker saves the engine right after the repair
      return true;
    }
    // Past that point: a job of its own behind it, as for a free pool.
  } else if (journalled_seq(pool) == 0 || state_.registry.find(pool) == nullptr) {
    return false;
  }
  post_read_only(pool, /*capture=*/true);
  return true;
}

bool PoolService::prices_on_worker(const std::string& pool) {
  if (executor_ == &inline_repairs_ || retiring_.contains(pool) || repairing(pool)) return false;
  const Pool* engine = state_.registry.find(pool);
  if (engine == nullptr || !engine->certificate_prices_due()) return false;
  post_read_only(pool, /*capture=*/false);
  return true;
}

void PoolService::post_read_only(const std::string& pool, bool capture) {
  auto job = std::make_shared<RepairJob>();
  job->pool = pool;
  job->engine = state_.registry.find(pool);
  job->read_only = true;
  job->capture_wanted = capture;
  job->make_prices = !capture;
  job->seq_before = job->last_seq = journalled_seq(pool);
  // It changes no topology: the loop goes on checking the pool's batches (a read beside a
  // read), and a window sealed meanwhile is chained behind it (start_apply()).
  job->staged.store(true);
  std::deque<std::shared_ptr<RepairJob>>& in_flight = repairing_[pool];
  job->after = in_flight.empty() ? nullptr : in_flight.back();
  job->stage_mutex = in_flight.empty() ? std::make_shared<std::mutex>()
                                       : in_flight.back()->stage_mutex;
  in_flight.push_back(job);
  post_task(job, [this, job] { read_alone(*job); });
}

void PoolService::read_alone(RepairJob& job) {
  // Nothing writes the pool meanwhile: its later windows are staged behind this task (one
  // strand), its retirement waits for the job's collection, and the loop only reads it (the
  // batch checks read its topology; the prices are a cache beside it that only explanations,
  // held meanwhile, read).
  if (job.after && job.after->failure) {
    // A broken engine: the jobs after this one fail too (stage_window()), the daemon stops.
    job.failure = std::make_exception_ptr(
        std::runtime_error("pool " + job.pool + ": an earlier repair failed"));
  } else if (job.make_prices) {
    try {
      job.engine->make_certificate_prices();
    } catch (...) {
      // Not made: the explanation makes them on the loop and answers its error (INTERNAL).
    }
  }
  job.after.reset();
  bool capture = false;
  {
    // A snapshot may have asked meanwhile (capture_on_worker(): this job was the pool's last).
    const std::lock_guard lock(finished_mutex_);
    job.capture_passed = true;
    capture = job.capture_wanted && !job.failure;
  }
  if (capture) job.captured = capture_engine(*job.engine);
}

void PoolService::wait_repairs() {
  std::unique_lock lock(finished_mutex_);
  finished_signal_.wait(lock, [this] {
    return std::all_of(repairing_.begin(), repairing_.end(),
                       [](const auto& entry) {
                         return std::all_of(entry.second.begin(), entry.second.end(),
                                            [](const auto& job) { return tasks_ended(*job); });
                       }) &&
           std::all_of(first_checks_.begin(), first_checks_.end(),
                       [](const auto& entry) { return entry.second->ended; });
  });
}

PoolService::RepairsDone PoolService::finish_repairs() {
  std::vector<std::shared_ptr<RepairJob>> collected;  // each pool's in seq order
  {
    const std::lock_guard lock(finished_mutex_);
    for (auto it = repairing_.begin(); it != repairing_.end();) {
      std::deque<std::shared_ptr<RepairJob>>& jobs = it->second;
      while (!jobs.empty() && tasks_ended(*jobs.front())) {
        collected.push_back(std::move(jobs.front()));
        jobs.pop_front();
      }
      it = jobs.empty() ? repairing_.erase(it) : std::next(it);
    }
  }
  RepairsDone done = std::move(retired_);
  retired_ = RepairsDone();
  std::exception_ptr failure;
  for (const std::shared_ptr<RepairJob>& done_job : collected) {
    RepairJob& job = *done_job;
    if (job.failure) {
      if (!failure) failure = job.failure;
      continue;
    }
    if (job.chained_counts) {  // staged: its counts are the pool's now
      if (BatchChecker* chain = chain_checker(job.pool)) chain->window_staged(*job.chained_counts);
      job.chained_counts.reset();
    }
    if (const auto wait = stage_waits_.find(job.pool);
        wait != stage_waits_.end() && wait->second == done_job) {
      stage_waits_.erase(wait);
    }
    if (!job.read_only) {
      PoolProgress& progress = state_.progress[job.pool];
      progress.record_commit(job.result, job.last_seq, job.batches);
      progress.last_timings.set_repair_us(job.repair_us);
      job.diff.set_incarnation(progress.incarnation);
      done.diffs.push_back(std::move(job.diff));
      done.window_closed.push_back(job.window_closed);
    }
    // A snapshot waiting for the pool takes the capture of the job it asked (saved on the
    // worker at that job's end), never the engine now: several jobs of the pool may be
    // collected at once, the later ones' windows already in it.
    if (collect_listener_ && job.captured) collect_listener_(job.pool, &*job.captured);
    // Emptied by the worker once staged, and not taken by a window since: kept for the next.
    if (job.checker) spare_checkers_.try_emplace(job.pool, std::move(*job.checker));
  }
  if (failure) std::rethrow_exception(failure);
  std::erase_if(draining_, [this](const std::string& pool) { return !repairing(pool); });
  offer_first_checks(done.replies);
  offer_held(done.replies);
  return done;
}

void PoolService::offer_first_checks(std::vector<std::pair<Ticket, v1::Ack>>& replies) {
  std::vector<std::shared_ptr<FirstCheck>> ended;
  {
    const std::lock_guard lock(finished_mutex_);
    for (auto it = first_checks_.begin(); it != first_checks_.end();) {
      if (!it->second->ended) {
        ++it;
        continue;
      }
      ended.push_back(std::move(it->second));
      it = first_checks_.erase(it);
    }
  }
  for (const std::shared_ptr<FirstCheck>& check : ended) {
    --held_count_;
    if (check->failure) std::rethrow_exception(check->failure);  // as a repair's (the daemon stops)
    const std::string pool = check->batch.pool;
    std::optional<v1::Ack> ack;
    if (check->refusal) {
      ack = refuse(std::move(*check->refusal));  // as offer() would have answered the message
    } else if (check->not_as_announced) {
      ack = offer_batch(check->ticket, std::move(check->decoded));
    } else {
      if (check->decode) check->batch = std::move(check->decoded);
      if (check->existing != nullptr && draining_.contains(pool)) {
        // A query of the pool came meanwhile, and its repairs are in flight: the batch waits
        // for them, as it would have on arrival (offer_held() checks it again then).
        held_[pool].push_front(HeldBatch{check->ticket, std::move(check->batch)});
        ++held_count_;
      } else {
        ack = offer_decoded(check->ticket, std::move(check->batch), check.get());
      }
    }
    if (ack) replies.emplace_back(check->ticket, std::move(*ack));
    if (check->existing != nullptr) {
      executor_->forget(check_strand(pool));  // its one task is over
    } else if (state_.registry.find(pool) == nullptr && !repairing(pool) &&
               !first_checks_.contains(pool)) {
      // Refused: the pool was never made, and its check, on its strand, is over.
      executor_->forget(pool);
    }
  }
}

void PoolService::offer_held(std::vector<std::pair<Ticket, v1::Ack>>& replies) {
  // In arrival order across pools (tickets count arrivals): their batches are independent but
  // for the slots under max_pools, which go to the earliest (waits_for_a_slot). A pool whose
  // first batch waits keeps the rest of its batches behind it.
  // Each pool at most once, by its map entry (stable: only the entry taken is erased, below).
  using Front = std::pair<Ticket, decltype(held_)::iterator>;
  const auto later = [](const Front& a, const Front& b) { return a.first > b.first; };
  std::priority_queue<Front, std::vector<Front>, decltype(later)> fronts(later);
  for (auto it = held_.begin(); it != held_.end(); ++it) {
    if (!it->second.empty()) fronts.emplace(it->second.front().ticket, it);
  }
  while (!fronts.empty()) {
    const auto it = fronts.top().second;
    fronts.pop();
    std::deque<HeldBatch>& waiting = it->second;
    if (waits_for_engine(waiting.front().batch)) continue;
    HeldBatch held = std::move(waiting.front());
    waiting.pop_front();
    --held_count_;
    if (held.batch.retire) {
      // Counted when held (offer_batch()); a retirement is never held back by a stage.
      if (const auto count = held_retirements_.find(it->first);
          count != held_retirements_.end() && --count->second == 0) {
        held_retirements_.erase(count);
      }
    }
    // A big one may go to a worker now, as on arrival (the rest of the pool's wait for it).
    if (!check_first_batch_off_loop(held.ticket, held.batch)) {
      if (auto ack = offer_decoded(held.ticket, std::move(held.batch))) {
        replies.emplace_back(held.ticket, std::move(*ack));
      }
    }
    // offer_decoded() may have put it back in front (hold_for_stage()): then it is met again.
    if (waiting.empty()) {
      held_.erase(it);
    } else {
      fronts.emplace(waiting.front().ticket, it);
    }
  }
}

}  // namespace yoke::daemon
