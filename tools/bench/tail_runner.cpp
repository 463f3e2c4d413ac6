#include "tools/bench/tail_runner.h"

#include <algorithm>
#include <map>
#include <memory>

#include "yoke/pool.h"
#include "tools/bench/aimed_stream.h"
#include "tools/bench/stopwatch.h"
#include "tools/bench/stored_stream.h"
#include "tools/bench/stream_runner.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::bench {
namespace {

constexpr Weight kTiesGrain = 100;

struct KindSamples {
  std::vector<double> repair_us;
  std::vector<double> repair_cpu_us;
  std::vector<double> touched;
  std::vector<double> touched_per_pair;
  std::vector<double> idle_touched;
  std::size_t idle_heavy = 0;

  void add(double us, double cpu_us, double touched_now, std::size_t pairs_changed) {
    repair_us.push_back(us);
    repair_cpu_us.push_back(cpu_us);
    touched.push_back(touched_now);
    if (pairs_changed > 0) {
      touched_per_pair.push_back(touched_now / static_cast<double>(pairs_changed));
    } else {
      idle_touched.push_back(touched_now);
      if (touched_now > kIdleTouchLimit) ++idle_heavy;
    }
  }

  KindFigures figures(std::string kind) const {
    KindFigures f;
    f.kind = std::move(kind);
    f.repair_us = spread_of(repair_us);
    f.repair_cpu_us = spread_of(repair_cpu_us);
    f.touched = spread_of(touched);
    f.touched_per_pair = spread_of(touched_per_pair);
    f.changed_commits = touched_per_pair.size();
    f.idle_touched = spread_of(idle_touched);
    f.idle_heavy = idle_heavy;
    return f;
  }
};

}  // namespace

std::vector<TailSetting> tail_settings(const std::vector<std::size_t>& sizes, std::size_t actions) {
  std::vector<TailSetting> settings;
  for (const std::size_t n : sizes) {
    const std::string graph = n >= 1000 && n % 1000 == 0 ? std::to_string(n / 1000) + "k"
                                                         : std::to_string(n);
    settings.push_back({"tail/city-" + graph, n, actions, 1});
    settings.push_back({"tail/city-" + graph + "-grain" + std::to_string(kTiesGrain), n, actions,
                        kTiesGrain});
  }
  return settings;
}

double TailResult::lemon_median_ms() const {
  std::vector<double> times;
  for (const LemonSample& s : samples) times.push_back(s.lemon_run_ms);
  return median_of(times);
}

double TailResult::lemon_median_cpu_ms() const {
  std::vector<double> times;
  for (const LemonSample& s : samples) times.push_back(s.lemon_run_cpu_ms);
  return median_of(times);
}

bool TailResult::ok() const {
  return std::all_of(samples.begin(), samples.end(), [](const LemonSample& s) { return s.ok(); });
}

TailResult run_tail(const TailSetting& setting, std::uint64_t seed, std::size_t lemon_samples) {
  TailResult result;
  result.setting = setting;
  result.seed = seed;
  const Stopwatch drawing;
  const AimedStream stream =
      draw_aimed_stream(aimed_tail_spec(setting.vertices, setting.actions, seed, setting.weight_grain));
  result.generate_ms = drawing.elapsed_ms();
  result.base_vertices = stream.base_vertices;
  result.base_edges = stream.base_edges;

  Pool pool(Mode::max_weight);
  {
    const Stopwatch watch;
    pool.commit(stream.base);
    result.load_ms = watch.elapsed_ms();
  }
  const std::vector<std::size_t> points = sample_points(stream.batches.size(), lemon_samples);
  auto next_point = points.begin();
  std::map<std::string, KindSamples> by_kind;
  KindSamples all;
  for (std::size_t c = 0; c < stream.batches.size(); ++c) {
    const std::vector<Event>& batch = stream.batches[c];
    reject_if_invalid(pool, batch, c + 1);
    const Stopwatch watch;
    const CommitResult committed = pool.commit(batch);
    const double us = watch.elapsed_ms() * 1000;
    const double cpu_us = watch.cpu_ms() * 1000;
    const auto touched = static_cast<double>(committed.stats.vertices_touched);
    const std::size_t changed = committed.diff.removed.size() + committed.diff.added.size();
    by_kind[stream.kinds[c]].add(us, cpu_us, touched, changed);
    all.add(us, cpu_us, touched, changed);
    if (next_point != points.end() && c + 1 == *next_point) {
      result.samples.push_back(sample_against_lemon(pool, c + 1));
      ++next_point;
    }
  }
  for (const auto& [kind, samples] : by_kind) result.kinds.push_back(samples.figures(kind));
  result.all = all.figures("all");
  return result;
}

}  // namespace yoke::bench
