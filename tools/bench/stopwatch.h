// Milliseconds since construction: wall clock (steady) and this thread's CPU time. The CPU
// figure is steadier on a shared machine, where waiting for a core inflates wall time.
// C++17-clean (lemon_matching.cpp uses it).
#pragma once

#include <time.h>

#include <chrono>

namespace yoke::bench {

class Stopwatch {
 public:
  double elapsed_ms() const {
    return std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - wall_)
        .count();
  }
  double cpu_ms() const { return thread_cpu_ms() - cpu_; }

 private:
  static double thread_cpu_ms() {
    timespec now{};
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &now);
    return static_cast<double>(now.tv_sec) * 1e3 + static_cast<double>(now.tv_nsec) / 1e6;
  }

  std::chrono::steady_clock::time_point wall_ = std::chrono::steady_clock::now();
  double cpu_ = thread_cpu_ms();
};

}  // namespace yoke::bench
