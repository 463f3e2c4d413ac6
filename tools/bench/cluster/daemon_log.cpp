#include "daemon_log.h"

#include <algorithm>
#include <cstdio>
#include <ctime>
#include <fstream>
#include <stdexcept>

#include <nlohmann/json.hpp>

namespace yoke::bench {
namespace {

// "2026-12-03T11:30:12.123456Z" (the daemon's log time) as a wall-clock time point.
WallClock::time_point parse_log_time(const std::string& text) {
  std::tm parts{};
  int micros = 0;
  if (std::sscanf(text.c_str(), "%4d-%2d-%2dT%2d:%2d:%2d.%6dZ", &parts.tm_year, &parts.tm_mon,
                  &parts.tm_mday, &parts.tm_hour, &parts.tm_min, &parts.tm_sec, &micros) != 7) {
    throw std::runtime_error("unreadable log time: " + text);
  }
  parts.tm_year -= 1900;
  parts.tm_mon -= 1;
  return WallClock::from_time_t(timegm(&parts)) + std::chrono::microseconds(micros);
}

// Calls `visit` with every JSON line of `log` that names `event`.
template <typename Visit>
void each_event(const std::filesystem::path& log, const std::string& event, Visit visit) {
  std::ifstream in(log);
  std::string line;
  const std::string needle = "\"" + event + "\"";
  while (std::getline(in, line)) {
    if (line.find(needle) == std::string::npos) continue;
    const nlohmann::json entry = nlohmann::json::parse(line, nullptr, false);
    if (entry.is_discarded() || entry.value("event", "") != event) continue;
    if (!visit(entry)) return;
  }
}

}  // namespace

std::optional<TakeoverRecord> read_takeover(const std::filesystem::path& log,
                                            const std::string& pool) {
  std::optional<TakeoverRecord> found;
  each_event(log, "pool_taken", [&](const nlohmann::json& entry) {
    if (entry.value("pool", "") != pool) return true;
    TakeoverRecord record;
    record.logged = parse_log_time(entry.value("time", ""));
    record.silent_ms = entry.value("silent_ms", std::uint64_t{0});
    record.seq = entry.value("seq", std::uint64_t{0});
    record.epoch = entry.value("epoch", std::uint64_t{0});
    found = record;
    return false;
  });
  return found;
}

SnapshotPauses snapshots_between(const std::filesystem::path& log, WallClock::time_point from,
                                 WallClock::time_point to) {
  SnapshotPauses pauses;
  each_event(log, "snapshot_written", [&](const nlohmann::json& entry) {
    const WallClock::time_point at = parse_log_time(entry.value("time", ""));
    if (at < from || at > to) return true;
    const std::uint64_t ms = entry.value("ms", std::uint64_t{0});
    ++pauses.count;
    pauses.total_ms += ms;
    pauses.longest_ms = std::max(pauses.longest_ms, ms);
    return true;
  });
  return pauses;
}

}  // namespace yoke::bench
