// PoolService's repairs: handing each pool of a sealed window to the executor, and collecting
// what comes back (pool_service.h says who may touch what while a repair is in flight).
#include <algorithm>
#include <chrono>
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
    job->events.insert(job->events.end(), pending.batch.events.begin(),
                       pending.batch.events.end());
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
  }
  sealed_seq_before_.clear();
  for (auto& [name, pool_job] : jobs) {
    if (pool_job->engine == nullptr) continue;
    // A copy of the binding to capture (clang 14 cannot capture a structured binding).
    std::shared_ptr<RepairJob> job = pool_job;
    executor_->run(name, [this, job] { run_repair(job); });
  }
}

void PoolService::run_repair(const std::shared_ptr<RepairJob>& job) {
  const auto start = std::chrono::steady_clock::now();
  try {
    job->result = job->engine->commit(job->events);
  } catch (...) {
    job->failure = std::current_exception();
  }
  job->repair_us = static_cast<std::uint64_t>(
      std::chrono::duration_cast<std::chrono::microseconds>(std::chrono::steady_clock::now() -
                                                            start)
          .count());
  job->events.clear();
  if (!job->failure && job->capture_wanted.load(std::memory_order_acquire)) {
    const Pool& pool = *job->engine;
    job->captured = EngineCapture{pool_config(pool), pool.weight(), pool.pairs(),
                                  pool.vertex_count(), pool.edge_count(), pool.save()};
  }
  {
    const std::lock_guard lock(finished_mutex_);
    finished_.push_back(job);
  }
  finished_signal_.notify_all();
  if (repair_listener_) repair_listener_();
}

bool PoolService::capture_after_repair(const std::string& pool) {
  const auto it = repairing_.find(pool);
  if (it == repairing_.end()) return false;
  it->second->capture_wanted.store(true, std::memory_order_release);
  return true;
}

void PoolService::wait_repairs() {
  std::unique_lock lock(finished_mutex_);
  // One repair in flight per pool: all are done when every repairing pool has a result.
  finished_signal_.wait(lock, [this] { return finished_.size() >= repairing_.size(); });
}

PoolService::RepairsDone PoolService::finish_repairs() {
  std::vector<std::shared_ptr<RepairJob>> collected;
  {
    const std::lock_guard lock(finished_mutex_);
    collected.swap(finished_);
  }
  RepairsDone done = std::move(retired_);
  retired_ = RepairsDone();
  std::exception_ptr failure;
  for (const std::shared_ptr<RepairJob>& done_job : collected) {
    RepairJob& job = *done_job;
    repairing_.erase(job.pool);
    if (job.failure) {
      if (!failure) failure = job.failure;
      continue;
    }
    PoolProgress& progress = state_.progress[job.pool];
    progress.record_commit(job.result, job.last_seq, job.batches);
    progress.last_timings.set_repair_us(job.repair_us);
    done.diffs.push_back(diff_of_commit(job.pool, job.result, job.last_seq, job.seq_before,
                                        progress.no_perfect_matching, job.repair_us));
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
    std::deque<HeldBatch> waiting = std::move(it->second);
    it = held_.erase(it);
    held_count_ -= waiting.size();
    for (HeldBatch& held : waiting) {
      if (auto ack = offer_decoded(held.ticket, std::move(held.batch))) {
        done.replies.emplace_back(held.ticket, std::move(*ack));
      }
    }
  }
  return done;
}

}  // namespace yoke::daemon
