// Per-thread niceness (Linux: setpriority(PRIO_PROCESS, tid) changes that one thread), so that
// the daemon's background threads (repair workers, the snapshot writer) yield a shared core to
// the loop that reads the sockets and sends the acknowledgements; and their names, so that an
// operator's `top -H` or `ps -L` tells which of yoked's threads holds a core.
#pragma once

#include <cstddef>
#include <string>

#include <boost/asio/thread_pool.hpp>

namespace yoke::daemon {

// The calling thread's niceness (-20..19).
int this_thread_niceness();

// Adds `offset` (>= 0) to the calling thread's niceness, capped at 19 (raising it needs no
// privilege). Returns "" or why it failed (the thread keeps its niceness then).
std::string add_this_thread_niceness(int offset);

// Names each of `pool`'s `threads` threads (as many as it was made with) `name` (Linux keeps
// 15 bytes of it) and adds `offset` to its niceness, before any other task runs on them: call
// right after making the pool. A thread inherits its maker's niceness, so the workers end at
// the caller's + offset. A failure is logged (`worker_nice_failed`) and the threads run on at
// the caller's niceness. Blocks until every thread has done it.
void prepare_pool_threads(boost::asio::thread_pool& pool, std::size_t threads,
                          const std::string& name, int offset);

}  // namespace yoke::daemon
