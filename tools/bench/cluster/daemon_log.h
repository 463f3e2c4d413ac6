// What the benchmark reads back from a yoked JSON log (`[logging] format = "json"`): the
// standby's account of a takeover (its `pool_taken` line) and the snapshots a daemon wrote in
// a span of time (each one holds the daemon's loop for its `ms`).
#pragma once

#include <chrono>
#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>

namespace yoke::bench {

using WallClock = std::chrono::system_clock;

struct TakeoverRecord {
  WallClock::time_point logged;  // the line's time: the pool is served from then on
  std::uint64_t silent_ms = 0;   // how long the standby had not heard the owner when it claimed
  std::uint64_t seq = 0;         // the pool's seq the standby took over at
  std::uint64_t epoch = 0;       // the claim's stream sequence
};

// The first `pool_taken` line for `pool`; nullopt when there is none. O(log size).
std::optional<TakeoverRecord> read_takeover(const std::filesystem::path& log,
                                            const std::string& pool);

struct SnapshotPauses {
  int count = 0;
  std::uint64_t total_ms = 0;
  std::uint64_t longest_ms = 0;
};

// The `snapshot_written` lines logged in [from, to]. O(log size).
SnapshotPauses snapshots_between(const std::filesystem::path& log, WallClock::time_point from,
                                 WallClock::time_point to);

}  // namespace yoke::bench
