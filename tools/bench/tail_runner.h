// The tail section of yoke_stream_bench: a city graph (plain, or with coarse weights full of
// ties) under the tail mix (gen::tail_mix), one action per commit, the aimed actions aimed at
// the pool itself; every commit timed alone and filed under its action, with LEMON solving
// the same graph from scratch at a few commits of the same run.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "yoke/types.h"
#include "tools/bench/spread.h"
#include "tools/bench/stream_sample.h"

namespace yoke::bench {

struct TailSetting {
  std::string name;  // "tail/city-100k", "tail/city-100k-grain100"
  std::size_t vertices = 0;
  std::size_t actions = 0;  // commits after the base graph
  Weight weight_grain = 1;  // > 1: weights rounded to multiples of it
};

// A commit that changes no pair but touches more vertices than this is a wasted repair (the
// issue's target for such commits at p99).
inline constexpr double kIdleTouchLimit = 2000;

// The figures of one action kind (or of all commits).
struct KindFigures {
  std::string kind;
  Spread repair_us;
  Spread repair_cpu_us;  // this thread's CPU time: waiting for a core on a shared machine left out
  Spread touched;
  Spread touched_per_pair;         // over the commits that changed at least one pair
  std::size_t changed_commits = 0;  // commits that changed at least one pair
  Spread idle_touched;              // over the commits that changed no pair
  std::size_t idle_heavy = 0;       // commits that changed no pair and touched > kIdleTouchLimit
};

struct TailResult {
  TailSetting setting;
  std::uint64_t seed = 0;
  std::size_t base_vertices = 0;
  std::size_t base_edges = 0;
  double generate_ms = 0;  // drawing the stream, with the aiming pool it feeds
  double load_ms = 0;
  std::vector<KindFigures> kinds;  // by kind name
  KindFigures all;
  std::vector<LemonSample> samples;

  double lemon_median_ms() const;
  double lemon_median_cpu_ms() const;
  bool ok() const;  // every sample: weights equal, certificate holds
};

// The settings for these graph sizes: each size plain and with weights of grain 100 (the city
// weights span ~5000). `actions` per setting.
std::vector<TailSetting> tail_settings(const std::vector<std::size_t>& sizes, std::size_t actions);

TailResult run_tail(const TailSetting& setting, std::uint64_t seed, std::size_t lemon_samples);

}  // namespace yoke::bench
