// Wall-clock time for records and timings that people read (journal and snapshot records,
// publish_unix_us). Never used to order or replay anything.
#pragma once

#include <chrono>
#include <cstdint>

namespace yoke::daemon {

// Microseconds since the Unix epoch.
inline std::uint64_t unix_time_us() {
  return static_cast<std::uint64_t>(std::chrono::duration_cast<std::chrono::microseconds>(
                                        std::chrono::system_clock::now().time_since_epoch())
                                        .count());
}

}  // namespace yoke::daemon
