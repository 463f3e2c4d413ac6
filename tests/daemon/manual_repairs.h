// A RepairExecutor for tests that keeps every task until the test runs it.
#pragma once

#include <cstddef>
#include <deque>
#include <functional>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "daemon/service/repair_executor.h"

namespace yoke::daemon::testing {

// Keeps every task until the test runs a pool's: the latch of a pool whose repair is held.
class ManualRepairs final : public RepairExecutor {
 public:
  void run(const std::string& pool, std::function<void()> task) override {
    queued_[pool].push_back(std::move(task));
  }
  // Runs the tasks queued for `pool` so far; how many.
  std::size_t release(const std::string& pool) {
    std::deque<std::function<void()>> tasks = std::move(queued_[pool]);
    queued_.erase(pool);
    for (auto& task : tasks) task();
    return tasks.size();
  }
  // Runs the first task queued for `pool` (a window's stage, or its repair); false when none.
  bool release_one(const std::string& pool) {
    const auto it = queued_.find(pool);
    if (it == queued_.end() || it->second.empty()) return false;
    std::function<void()> task = std::move(it->second.front());
    it->second.pop_front();
    if (it->second.empty()) queued_.erase(it);
    task();
    return true;
  }
  std::size_t queued(const std::string& pool) const {
    const auto it = queued_.find(pool);
    return it == queued_.end() ? 0 : it->second.size();
  }
  // Every forget() so far, with how many tasks of that pool were queued at the time.
  void forget(const std::string& pool) override { forgotten_.emplace_back(pool, queued(pool)); }
  const std::vector<std::pair<std::string, std::size_t>>& forgotten() const { return forgotten_; }

 private:
  std::map<std::string, std::deque<std::function<void()>>> queued_;
  std::vector<std::pair<std::string, std::size_t>> forgotten_;
};

}  // namespace yoke::daemon::testing
