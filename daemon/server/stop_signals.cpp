#include "stop_signals.h"

#include <pthread.h>
#include <unistd.h>

#include <csignal>
#include <system_error>
#include <thread>

namespace yoke::daemon {

void route_stop_signals_to_their_own_thread() {
  sigset_t stops;
  sigemptyset(&stops);
  sigaddset(&stops, SIGINT);
  sigaddset(&stops, SIGTERM);
  if (const int error = ::pthread_sigmask(SIG_BLOCK, &stops, nullptr); error != 0) {
    throw std::system_error(error, std::generic_category(), "blocking the stop signals");
  }
  std::thread([stops] {
    ::pthread_setname_np(::pthread_self(), "yoked-signals");  // a name is a nicety
    ::pthread_sigmask(SIG_UNBLOCK, &stops, nullptr);
    // Each signal's handler runs here, then pause() returns; there is nothing else to do. The
    // thread ends with the process.
    for (;;) ::pause();
  }).detach();
}

}  // namespace yoke::daemon
