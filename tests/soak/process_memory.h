// A process's resident memory as Linux reports it (/proc/PID/status), and the verdict of the
// memory soak: do the later samples of a run stay within a tolerance of its earlier ones?
#pragma once

#include <sys/types.h>

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace yoke::soak {

// VmRSS of `pid` in KiB; nothing when the process is gone or the line is missing. O(1) reads
// of a small file.
std::optional<std::uint64_t> resident_kib(pid_t pid);

struct MemoryTrend {
  std::uint64_t early_kib = 0;  // the largest sample of the first third after warm-up
  std::uint64_t late_kib = 0;   // the largest sample of the last third
  double ratio = 0;             // late / early
  bool flat = false;            // ratio <= 1 + tolerance
  std::string problem;          // why no verdict could be reached (too few samples)
};

// Drops the first `warmup` fraction of the samples (in run order), then compares the largest
// sample of the last third of the rest with the largest of its first third: the same run
// against itself, no absolute numbers. Needs at least 3 samples after warm-up. O(samples).
MemoryTrend memory_trend(const std::vector<std::uint64_t>& samples_kib, double warmup,
                         double tolerance);

}  // namespace yoke::soak
