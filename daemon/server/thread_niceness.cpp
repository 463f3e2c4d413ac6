#include "thread_niceness.h"

#include <pthread.h>
#include <sys/resource.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <latch>
#include <memory>
#include <mutex>

#include <boost/asio/post.hpp>

#include "daemon/logging/log_event.h"

namespace yoke::daemon {
namespace {

constexpr int kNiceMost = 19;  // setpriority clamps above this anyway; said here for the cap

}  // namespace

int this_thread_niceness() {
  errno = 0;  // getpriority may return -1 as a value
  return ::getpriority(PRIO_PROCESS, static_cast<id_t>(::gettid()));
}

std::string add_this_thread_niceness(int offset) {
  const int now = this_thread_niceness();
  const int wanted = std::min(now + std::max(offset, 0), kNiceMost);
  if (wanted == now) return "";
  if (::setpriority(PRIO_PROCESS, static_cast<id_t>(::gettid()), wanted) != 0) {
    return std::string("setpriority: ") + std::strerror(errno);
  }
  return "";
}

void prepare_pool_threads(boost::asio::thread_pool& pool, std::size_t threads,
                          const std::string& name, int offset) {
  if (threads == 0) return;
  const std::string shown = name.substr(0, 15);  // longer names are refused (ERANGE)
  // Every task waits for all the others: so each of the pool's threads takes exactly one.
  // Shared: a worker may still be leaving wait() when this returns.
  auto all_done = std::make_shared<std::latch>(static_cast<std::ptrdiff_t>(threads) + 1);
  std::mutex failure_mutex;
  std::string failure;  // written before arriving: read here after the latch
  for (std::size_t i = 0; i < threads; ++i) {
    boost::asio::post(pool, [&failure_mutex, &failure, &shown, all_done, offset] {
      ::pthread_setname_np(::pthread_self(), shown.c_str());  // a name is a nicety: no failure
      std::string why = add_this_thread_niceness(offset);
      if (!why.empty()) {
        const std::lock_guard lock(failure_mutex);
        failure = std::move(why);
      }
      all_done->arrive_and_wait();
    });
  }
  all_done->arrive_and_wait();
  if (!failure.empty()) {
    log_event(LogLevel::warn, "worker_nice_failed", {{"offset", offset}, {"reason", failure}});
  }
}

}  // namespace yoke::daemon
