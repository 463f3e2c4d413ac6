#include "tools/bench/stream_runner.h"

#include <algorithm>
#include <chrono>
#include <memory>
#include <stdexcept>
#include <string>

#include "yoke/pool.h"
#include "tools/bench/heap_counter.h"
#include "tools/bench/stopwatch.h"
#include "tools/bench/stored_stream.h"

namespace yoke::bench {
namespace {

using Clock = std::chrono::steady_clock;

}  // namespace

gen::StreamSpec stream_spec(const StreamSetting& setting, std::uint64_t seed) {
  gen::StreamSpec spec;
  spec.family = gen::StreamFamily::city;
  spec.vertices = setting.vertices;
  spec.degree = kStreamCityNeighbours;
  spec.seed = seed;
  spec.events = setting.events;
  spec.batch_min = spec.batch_max = setting.batch;
  spec.mix = gen::benchmark_mix();
  spec.arrival_edges = kArrivalEdges;
  return spec;
}

double StreamResult::lemon_median_ms() const {
  std::vector<double> times;
  for (const LemonSample& s : samples) times.push_back(s.lemon_run_ms);
  return median_of(times);
}

double StreamResult::lemon_median_build_run_ms() const {
  std::vector<double> times;
  for (const LemonSample& s : samples) times.push_back(s.lemon_build_run_ms);
  return median_of(times);
}

bool StreamResult::ok() const {
  return std::all_of(samples.begin(), samples.end(), [](const LemonSample& s) { return s.ok(); });
}

StreamResult run_setting(const StreamSetting& setting, std::uint64_t seed,
                         std::size_t lemon_samples) {
  StreamResult result;
  result.setting = setting;
  result.seed = seed;
  const StoredStream stream = store_stream(stream_spec(setting, seed));
  result.base_vertices = stream.base_vertices;
  result.base_edges = stream.base_edges;
  result.generate_ms = stream.generate_ms;
  result.tally = stream.tally;
  result.commits = stream.batches();
  result.events = stream.events.size();

  const std::vector<std::size_t> points = sample_points(result.commits, lemon_samples);
  std::vector<double> commit_us(result.commits);
  std::vector<double> touched(result.commits);
  result.samples.reserve(points.size());

  // From here on, every heap byte above the baseline is the pool's.
  const std::size_t baseline = heap::live_bytes();
  PoolMemory& memory = result.memory;
  auto pool = std::make_unique<Pool>(Mode::max_weight);
  reject_if_invalid(*pool, stream.base, 0);
  heap::reset_peak();  // after the check: its scratch is not the pool's
  {
    const Stopwatch watch;
    const CommitResult loaded = pool->commit(stream.base);
    result.load_ms = watch.elapsed_ms();
    result.load_weight = loaded.weight;
    result.load_pairs = loaded.pairs;
  }
  memory.load_peak = heap::peak_above(baseline);
  memory.after_load = heap::live_bytes() - baseline;

  heap::reset_peak();
  std::uint64_t roots = 0, searches = 0, augmentations = 0;
  Clock::duration in_commits{};
  auto next_point = points.begin();
  for (std::size_t c = 0; c < result.commits; ++c) {
    const std::span<const Event> batch = stream.batch(c);
    reject_if_invalid(*pool, batch, c + 1);
    count_matched(*pool, batch, result.tally);

    const Stopwatch cpu;
    const Clock::time_point start = Clock::now();
    const CommitResult committed = pool->commit(batch);
    const Clock::duration took = Clock::now() - start;
    result.commit_cpu_seconds += cpu.cpu_ms() / 1e3;

    in_commits += took;
    commit_us[c] = std::chrono::duration<double, std::micro>(took).count();
    touched[c] = static_cast<double>(committed.stats.vertices_touched);
    roots += committed.stats.roots;
    result.scans += committed.stats.vertices_touched;
    result.last_level_scans += committed.stats.last_level_scans;
    result.dual_steps += committed.stats.dual_steps;
    result.stale_bounds += committed.stats.stale_bounds;
    searches += committed.stats.searches;
    augmentations += committed.stats.augmentations;

    if (next_point != points.end() && c + 1 == *next_point) {
      memory.stream_peak = std::max(memory.stream_peak, heap::peak_above(baseline));
      result.samples.push_back(sample_against_lemon(*pool, c + 1));
      heap::reset_peak();  // LEMON's window moved the peak; the pool's window reopens
      ++next_point;
    }
  }
  memory.stream_peak = std::max(memory.stream_peak, heap::peak_above(baseline));
  memory.at_end = heap::live_bytes() - baseline;
  memory.end_vertices = pool->vertex_count();
  memory.end_edges = pool->edge_count();
  pool.reset();

  const double commits = std::max<double>(1, static_cast<double>(result.commits));
  result.commit_seconds = std::chrono::duration<double>(in_commits).count();
  result.commit_us = spread_of(std::move(commit_us));
  result.touched = spread_of(std::move(touched));
  result.mean_roots = static_cast<double>(roots) / commits;
  result.mean_searches = static_cast<double>(searches) / commits;
  result.mean_augmentations = static_cast<double>(augmentations) / commits;
  result.searches = searches;
  result.augmentations = augmentations;
  return result;
}

}  // namespace yoke::bench
