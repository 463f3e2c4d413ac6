// Runs one setting of yoke_stream_bench: a city graph loaded into a pool, then a stream of
// events committed in batches, every commit timed alone, with LEMON re-solving from scratch at
// a few evenly spaced commits.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "yoke/types.h"
#include "tools/bench/event_tally.h"
#include "tools/bench/spread.h"
#include "tools/bench/stream_sample.h"
#include "tools/bench/stream_settings.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::bench {

// Heap bytes of the pool alone (the stored stream and the bench's own arrays are allocated
// before the window opens and the LEMON samples are left out of it).
struct PoolMemory {
  std::size_t load_peak = 0;    // while the base graph was committed
  std::size_t after_load = 0;   // live once loaded
  std::size_t stream_peak = 0;  // while streaming
  std::size_t at_end = 0;       // live after the last commit
  std::size_t end_vertices = 0;
  std::size_t end_edges = 0;
};

struct StreamResult {
  StreamSetting setting;
  std::uint64_t seed = 0;
  std::size_t base_vertices = 0;
  std::size_t base_edges = 0;
  double generate_ms = 0;

  double load_ms = 0;  // the first commit: the base graph solved from scratch
  Weight load_weight = 0;
  std::size_t load_pairs = 0;

  std::size_t commits = 0;
  std::size_t events = 0;
  Spread commit_us;  // repair time per commit, microseconds
  double commit_seconds = 0;  // sum over the streamed commits
  double commit_cpu_seconds = 0;  // the same, this thread's CPU time (steadier on a busy machine)
  double events_per_second() const {
    return commit_seconds > 0 ? static_cast<double>(events) / commit_seconds : 0;
  }

  // Work per commit, from CommitResult.stats.
  double mean_roots = 0;
  double mean_searches = 0;
  double mean_augmentations = 0;
  // Where the searches' work went, summed over the streamed commits (RepairStats).
  std::uint64_t searches = 0;
  std::uint64_t augmentations = 0;
  std::uint64_t scans = 0;             // vertices touched
  std::uint64_t last_level_scans = 0;  // of those, scanned at a search's last dual level
  std::uint64_t dual_steps = 0;
  std::uint64_t stale_bounds = 0;
  Spread touched;  // vertices touched per commit

  EventTally tally;
  PoolMemory memory;
  std::vector<LemonSample> samples;

  double lemon_median_ms() const;            // mwm.run()
  double lemon_median_build_run_ms() const;  // graph building included
  bool ok() const;  // every sample: weights equal, certificate holds
};

// The stream of a setting: the city family with the benchmark mix, cut into commits of
// setting.batch events.
gen::StreamSpec stream_spec(const StreamSetting& setting, std::uint64_t seed);

// `lemon_samples` >= 1 evenly spaced sample points (the last after the final commit).
StreamResult run_setting(const StreamSetting& setting, std::uint64_t seed,
                         std::size_t lemon_samples);

}  // namespace yoke::bench
