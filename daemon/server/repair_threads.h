// The daemon's repair executor: a pool of worker threads and one strand per pool, so that a
// pool's tasks run one at a time in the order given while different pools' run at once.
#pragma once

#include <cstddef>
#include <functional>
#include <map>
#include <string>

#include <boost/asio/strand.hpp>
#include <boost/asio/thread_pool.hpp>

#include "daemon/service/repair_executor.h"

namespace yoke::daemon {

class RepairThreads final : public RepairExecutor {
 public:
  // Starts `threads` workers (at least 1), each `nice_offset` nicer than the caller
  // (`[service] worker_nice`; thread_niceness.h), so that the loop wins a shared core.
  explicit RepairThreads(std::size_t threads, int nice_offset = 0);
  // Waits for every task given (join()).
  ~RepairThreads() override;
  RepairThreads(const RepairThreads&) = delete;
  RepairThreads& operator=(const RepairThreads&) = delete;

  // Queues `task` on `pool`'s strand. Call from one thread (the loop): the strands' map is not
  // guarded. O(log pools).
  void run(const std::string& pool, std::function<void()> task) override;
  // Drops the pool's strand. From the loop, as run(). O(log pools).
  void forget(const std::string& pool) override { strands_.erase(pool); }
  // Strands kept: one per pool given a task and not forgotten.
  std::size_t strands() const { return strands_.size(); }

  // Blocks until every task given has run, then stops the workers; run() must not be called
  // after it. Idempotent.
  void join();

  std::size_t threads() const { return threads_; }

  // The workers the daemon starts for `[service] repair_threads` = `configured` (0: one per
  // CPU this process may use, by its affinity mask).
  static std::size_t for_setting(std::uint64_t configured);

 private:
  using Strand = boost::asio::strand<boost::asio::thread_pool::executor_type>;
  std::size_t threads_;
  boost::asio::thread_pool workers_;
  std::map<std::string, Strand> strands_;
  bool joined_ = false;
};

}  // namespace yoke::daemon
