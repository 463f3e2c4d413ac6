// The settings of yoke_stream_bench: each graph size times each commit size. A setting's name
// is "city-100k/b1": the graph, then the events per commit.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace yoke::bench {

// yoke_bench's city instances use the same neighbour count, so city-100k here is the graph
// yoke_bench measures under that name (same seed).
inline constexpr int kStreamCityNeighbours = 10;
inline constexpr int kArrivalEdges = 10;  // the "~10 edges" per arriving vertex
inline constexpr std::size_t kCommitSizes[] = {1, 100};

struct StreamSetting {
  std::string name;   // "city-100k/b1"
  std::string graph;  // "city-100k"
  std::size_t vertices = 0;
  std::size_t batch = 1;   // events per commit
  std::size_t events = 0;  // streamed after the base graph
  std::size_t commits() const { return (events + batch - 1) / batch; }
};

std::vector<std::size_t> default_sizes();  // 10^5 and 3x10^5
std::vector<std::size_t> quick_sizes();    // small graphs for the smoke test

// Events per setting unless --events says otherwise: enough single-event commits for a stable
// p99 at 10^5 vertices, fewer on larger graphs (each LEMON sample there costs seconds).
std::size_t default_events(std::size_t vertices, bool quick);

// Every size times every commit size, in that order. `events`, when given, applies to all.
std::vector<StreamSetting> make_settings(const std::vector<std::size_t>& sizes,
                                         std::optional<std::size_t> events, bool quick);

// --only: a setting's full name, its graph ("city-100k") or its commit size ("b100").
bool setting_matches(const StreamSetting& setting, const std::string& pattern);

}  // namespace yoke::bench
