#include "repair_threads.h"

#include <sched.h>

#include <algorithm>

#include <boost/asio/post.hpp>

#include "thread_niceness.h"

namespace yoke::daemon {

RepairThreads::RepairThreads(std::size_t threads, int nice_offset)
    : threads_(std::max<std::size_t>(threads, 1)), workers_(threads_) {
  prepare_pool_threads(workers_, threads_, "yoked-repair", nice_offset);
}

RepairThreads::~RepairThreads() { join(); }

void RepairThreads::run(const std::string& pool, std::function<void()> task) {
  auto it = strands_.find(pool);
  if (it == strands_.end()) {
    it = strands_.emplace(pool, boost::asio::make_strand(workers_.get_executor())).first;
  }
  boost::asio::post(it->second, std::move(task));
}

void RepairThreads::join() {
  if (joined_) return;
  joined_ = true;
  workers_.join();  // runs what is queued, then the threads end
}

std::size_t RepairThreads::for_setting(std::uint64_t configured) {
  if (configured > 0) return static_cast<std::size_t>(configured);
  cpu_set_t usable;
  CPU_ZERO(&usable);
  if (sched_getaffinity(0, sizeof(usable), &usable) != 0) return 1;
  return static_cast<std::size_t>(std::max(CPU_COUNT(&usable), 1));
}

}  // namespace yoke::daemon
