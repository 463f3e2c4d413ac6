// PoolService's repairs: handing each pool of a sealed window to the executor, and collecting
// what comes back (pool_service.h says who may touch what while a repair is in flight).
#include <algorithm>
#include <chrono>
#include <map>
#include <optional>
#include <stdexcept>

#include "diff_message.h"
#include "wire_types.h"
#include "pool_service.h"

namespace yoke::daemon {

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
    job->batches_events.push_back(std::move(pending.batch.events));
    job->last_seq = pending.seq;
    ++job->batches;
    // Its last entry retires it (always the last: seal() closes the window there).
    if (pending.batch.retire) retired.insert(pending.batch.pool);
  }
  sealed_.clear();
  retiring_.clear();

  for (auto& [name, job] : jobs) {
    job->seq_before = sealed_seq_before_[name];
    Pool& pool = *state_.registry.find(name);
    if (retired.contains(name)) {
      // Nothing to repair: the pool ends here (the window's batches before the retirement are
      // in the journal, and replay drops them with the pool as this does).
      retired_.diffs.push_back(diff_of_retirement(name, pool, job->last_seq, job->seq_before));
      retired_.window_closed.push_back(window_closed);
      take_pool_state(state_, name);
      continue;
    }
    if (!repairing_.emplace(name, job).second) {
      throw std::logic_error("pool " + name + " was handed a second repair while in one");
    }
    job->engine = &pool;
    if (auto checker = sealed_checkers_.find(name); checker != sealed_checkers_.end()) {
      job->precheck.emplace(std::move(checker->second));
    }
  }
  sealed_seq_before_.clear();
  sealed_checkers_.clear();  // a retired pool's, and none else
  for (auto& [name, pool_job] : jobs) {
    if (pool_job->engine == nullptr) continue;
    // A copy of the binding to capture (clang 14 cannot capture a structured binding).
    std::shared_ptr<RepairJob> job = pool_job;
    post_task(job, [this, job] { run_repair(job); });
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

void PoolService::hold(Ticket ticket, DecodedBatch batch, const std::shared_ptr<RepairJob>& job) {
  HeldBatch& held = held_[batch.pool].emplace_back(HeldBatch{ticket, std::move(batch), nullptr});
  ++held_count_;
  // After a retirement the pool's batches are refused, not checked (offer_decoded).
  if (held.batch.retire) job->prechecks_stopped = true;
  if (job->prechecks_stopped) return;
  auto check = std::make_shared<HeldCheck>();
  check->events = std::move(held.batch.events);
  held.check = check;
  RepairJob* repair = job.get();  // the task's job outlives it: post_task holds it
  post_task(job, [repair, check] { precheck(*repair, *check); });
}

void PoolService::precheck(RepairJob& job, HeldCheck& check) {
  if (job.failure || job.precheck_failed) return;  // left to the loop (or the daemon stops)
  try {
    if (!job.precheck) job.precheck.emplace(*job.engine);
    check.verdict = job.precheck->accept(check.events);
    check.checked = true;
  } catch (...) {
    // A checker cut short may hold part of a batch: the loop checks every waiting batch.
    job.precheck.reset();
    job.precheck_failed = true;
  }
}

void PoolService::run_repair(const std::shared_ptr<RepairJob>& job) {
  const auto start = std::chrono::steady_clock::now();
  try {
    std::size_t total = 0;
    for (const std::vector<Event>& events : job->batches_events) total += events.size();
    std::vector<Event> joined;
    joined.reserve(total);
    for (const std::vector<Event>& events : job->batches_events) {
      joined.insert(joined.end(), events.begin(), events.end());
    }
    job->batches_events.clear();
    job->result = job->engine->commit(joined);
  } catch (...) {
    job->failure = std::current_exception();
  }
  job->repair_us = static_cast<std::uint64_t>(
      std::chrono::duration_cast<std::chrono::microseconds>(std::chrono::steady_clock::now() -
                                                            start)
          .count());
  if (!job->failure) {
    // The published diff is built here, off the loop; the loop's progress says the same
    // no_perfect_matching (PoolProgress::record_commit).
    job->diff = diff_of_commit(job->pool, job->result, job->last_seq, job->seq_before,
                               job->result.status == SolveStatus::no_perfect_matching,
                               job->repair_us);
    job->result.diff = MatchingDiff();  // its pairs are in the message now: freed here too
  }
  // The sealed window's checker, now that its batches are in the pool: emptied here, off the
  // loop, it checks the batches that waited (precheck()).
  if (job->precheck) job->precheck->clear();
  if (!job->failure && job->capture_wanted.load(std::memory_order_acquire)) {
    const Pool& pool = *job->engine;
    job->captured = EngineCapture{pool_config(pool), pool.weight(), pool.pairs(),
                                  pool.vertex_count(), pool.edge_count(), pool.save()};
  }
}

bool PoolService::capture_after_repair(const std::string& pool) {
  const auto it = repairing_.find(pool);
  if (it == repairing_.end()) return false;
  it->second->capture_wanted.store(true, std::memory_order_release);
  return true;
}

void PoolService::wait_repairs() {
  std::unique_lock lock(finished_mutex_);
  finished_signal_.wait(lock, [this] {
    return std::all_of(repairing_.begin(), repairing_.end(),
                       [](const auto& entry) { return tasks_ended(*entry.second); });
  });
}

PoolService::RepairsDone PoolService::finish_repairs() {
  std::vector<std::shared_ptr<RepairJob>> collected;
  {
    const std::lock_guard lock(finished_mutex_);
    for (const auto& [name, job] : repairing_) {
      if (tasks_ended(*job)) collected.push_back(job);
    }
  }
  std::map<std::string, std::optional<BatchChecker>> prechecked;
  RepairsDone done = std::move(retired_);
  retired_ = RepairsDone();
  std::exception_ptr failure;
  for (const std::shared_ptr<RepairJob>& done_job : collected) {
    RepairJob& job = *done_job;
    repairing_.erase(job.pool);
    prechecked.emplace(job.pool, std::move(job.precheck));
    if (job.failure) {
      if (!failure) failure = job.failure;
      continue;
    }
    PoolProgress& progress = state_.progress[job.pool];
    progress.record_commit(job.result, job.last_seq, job.batches);
    progress.last_timings.set_repair_us(job.repair_us);
    done.diffs.push_back(std::move(job.diff));
    done.window_closed.push_back(job.window_closed);
    if (collect_listener_) collect_listener_(job.pool, job.captured ? &*job.captured : nullptr);
  }
  if (failure) std::rethrow_exception(failure);

  // The batches that waited, in arrival order, now that their pools are the loop's again.
  for (auto it = held_.begin(); it != held_.end();) {
    if (repairing(it->first)) {
      ++it;
      continue;
    }
    const std::string pool = it->first;
    std::deque<HeldBatch> waiting = std::move(it->second);
    it = held_.erase(it);
    held_count_ -= waiting.size();
    std::optional<BatchChecker> checker;
    if (auto found = prechecked.find(pool); found != prechecked.end()) {
      checker = std::move(found->second);
    }
    offer_held(pool, std::move(waiting), std::move(checker), done.replies);
  }
  return done;
}

void PoolService::offer_held(const std::string& pool, std::deque<HeldBatch> waiting,
                             std::optional<BatchChecker> prechecked,
                             std::vector<std::pair<Ticket, v1::Ack>>& replies) {
  // The strand checked the waiting batches against the pool after its repair, as if each
  // passed its retry rules; the window holds none of the pool's batches yet (they waited), so
  // its checker becomes the window's. Unless a batch it accepted is stopped here by its retry
  // rules: from then on the window's checker is rebuilt and the loop checks as before.
  bool speculating = prechecked.has_value() && !window_pools_.contains(pool);
  if (speculating) {
    Pool& engine = *state_.registry.find(pool);
    window_pool(pool, engine).checker = std::move(*prechecked);
  }
  for (HeldBatch& held : waiting) {
    const bool checked = held.check != nullptr && held.check->checked;
    if (held.check != nullptr) held.batch.events = std::move(held.check->events);
    if (!speculating || !checked) {
      speculating = false;  // a batch not checked there: none after it was (hold())
      if (auto ack = offer_decoded(held.ticket, std::move(held.batch))) {
        replies.emplace_back(held.ticket, std::move(*ack));
      }
      continue;
    }
    Prechecked verdict{&held.check->verdict};
    const bool strand_accepted = !held.check->verdict.has_value();
    if (auto ack = offer_decoded(held.ticket, std::move(held.batch), &verdict)) {
      replies.emplace_back(held.ticket, std::move(*ack));
    }
    if (verdict.used || !strand_accepted) continue;
    // Stopped before its check (a retry, an out-of-order batch), yet the strand's checker
    // holds its events: the window's checker is rebuilt from the batches the window holds.
    speculating = false;
    Pool& engine = *state_.registry.find(pool);
    WindowPool& in_window = window_pool(pool, engine);
    in_window.checker = BatchChecker(engine);
    for (const PendingBatch& pending : window_) {
      if (pending.batch.pool != pool || pending.batch.retire) continue;
      if (auto error = in_window.checker.accept(pending.batch.events)) {
        throw std::logic_error("pool " + pool + ": a batch accepted on its strand is refused "
                               "when checked again: " + error->message);
      }
    }
  }
}

}  // namespace yoke::daemon
