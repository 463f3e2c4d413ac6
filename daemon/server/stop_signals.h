// SIGINT and SIGTERM go to one thread of their own.
#pragma once

namespace yoke::daemon {

// Blocks SIGINT and SIGTERM in the calling thread (and so in every thread it starts later:
// threads inherit the mask) and starts one thread, "yoked-signals", that takes them and only
// waits. A signal interrupts the system call of the thread it is delivered to (EINTR), and
// ZeroMQ's calls report that as an error: delivered to the loop mid-call, a stop turned into a
// failed daemon (exit 1, no final snapshot). Asio's signal_set still sees every signal: its
// handler runs on the signals' thread and wakes the loop. Call it first in main(), before any
// other thread exists.
void route_stop_signals_to_their_own_thread();

}  // namespace yoke::daemon
