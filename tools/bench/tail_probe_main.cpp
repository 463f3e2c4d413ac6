// yoke_tail_probe: what the heaviest single-action commits of yoke_stream_bench's tail section
// do (README "The repair's tail, per kind of event"). Replays the same aimed stream (city
// graph, --mix tail, one action per commit) into a max-weight pool and prints, per kind, the
// commits at or above the kind's p98 of vertices touched with the repair's counters: vertices
// touched, of those pushed by the events' dissolving, roots, trees, augmentations, blossoms
// dissolved by events, formed and expanded by the search, dual steps, pairs changed, CPU us.
//
//   yoke_tail_probe [--vertices N] [--actions A] [--seed S] [--weight-grain G] [--kind K]...
//                   [--repeat C --times K]
//
// --repeat C commits batch C again K times from the pool's saved state before it (for a
// profiler: the saving and restoring are outside the commit) and prints its CPU time p50.
#include <algorithm>
#include <cstdio>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "tools/bench/aimed_stream.h"
#include "tools/bench/stopwatch.h"
#include "yoke/pool.h"

namespace {

using namespace yoke;
using namespace yoke::bench;

struct Row {
  std::size_t commit = 0;
  RepairStats stats;
  std::size_t changed = 0;
  double cpu_us = 0;
};

void print_kind(const std::string& kind, std::vector<Row> rows) {
  std::sort(rows.begin(), rows.end(), [](const Row& x, const Row& y) {
    return x.stats.vertices_touched > y.stats.vertices_touched;
  });
  const std::size_t heavy = std::max<std::size_t>(1, (rows.size() + 49) / 50);  // the top 2%
  std::printf("%s: %zu commits, the %zu heaviest\n", kind.c_str(), rows.size(), heavy);
  std::printf("  %7s %8s %9s %5s %5s %5s %9s %7s %8s %6s %7s %9s\n", "commit", "touched",
              "dissolved", "roots", "trees", "augm", "dissolves", "formed", "expanded", "steps",
              "changed", "cpu_us");
  for (std::size_t i = 0; i < heavy; ++i) {
    const Row& r = rows[i];
    const RepairStats& s = r.stats;
    std::printf("  %7zu %8llu %9llu %5llu %5llu %5llu %9llu %7llu %8llu %6llu %7zu %9.0f\n",
                r.commit, static_cast<unsigned long long>(s.vertices_touched),
                static_cast<unsigned long long>(s.vertices_dissolved),
                static_cast<unsigned long long>(s.roots), static_cast<unsigned long long>(s.searches),
                static_cast<unsigned long long>(s.augmentations),
                static_cast<unsigned long long>(s.blossoms_dissolved),
                static_cast<unsigned long long>(s.blossoms_formed),
                static_cast<unsigned long long>(s.blossoms_expanded),
                static_cast<unsigned long long>(s.dual_steps), r.changed, r.cpu_us);
  }
}

}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"The heaviest commits of the tail mix, with the repair's counters"};
  std::size_t vertices = 100000;
  std::size_t actions = 600;
  std::uint64_t seed = 1;
  Weight grain = 100;
  std::vector<std::string> kinds;
  app.add_option("--vertices", vertices, "Vertices of the city graph")->check(CLI::Range(100, 1000000));
  app.add_option("--actions", actions, "Commits after the base graph, one action each")->check(CLI::Range(1, 100000));
  app.add_option("--seed", seed, "Seed of the stream");
  app.add_option("--weight-grain", grain, "Weights rounded to multiples of it (1: as drawn)")->check(CLI::Range(1, 100000));
  app.add_option("--kind", kinds, "Only these action kinds (default: all)");
  std::size_t repeat = 0;
  std::size_t times = 100;
  app.add_option("--repeat", repeat, "Commit this batch (1-based) again from the state before it");
  app.add_option("--times", times, "How often --repeat commits it")->check(CLI::Range(1, 100000));
  CLI11_PARSE(app, argc, argv);

  const AimedStream stream = draw_aimed_stream(aimed_tail_spec(vertices, actions, seed, grain));
  Pool pool(Mode::max_weight);
  pool.commit(stream.base);
  std::map<std::string, std::vector<Row>> by_kind;
  std::string before_repeat;
  for (std::size_t c = 0; c < stream.batches.size(); ++c) {
    if (c + 1 == repeat) before_repeat = pool.save();
    const Stopwatch watch;
    const CommitResult committed = pool.commit(stream.batches[c]);
    const double cpu_us = watch.cpu_ms() * 1000;
    by_kind[stream.kinds[c]].push_back(
        {c + 1, committed.stats, committed.diff.removed.size() + committed.diff.added.size(), cpu_us});
  }
  std::printf("city graph of %zu vertices, grain %lld, %zu actions, seed %llu\n", vertices,
              static_cast<long long>(grain), actions, static_cast<unsigned long long>(seed));
  for (const auto& [kind, rows] : by_kind) {
    if (!kinds.empty() && std::find(kinds.begin(), kinds.end(), kind) == kinds.end()) continue;
    print_kind(kind, rows);
  }
  if (!before_repeat.empty()) {
    std::vector<double> cpu_us;
    for (std::size_t k = 0; k < times; ++k) {
      const std::unique_ptr<Pool> copy = Pool::restore(before_repeat);
      const Stopwatch watch;
      copy->commit(stream.batches[repeat - 1]);
      cpu_us.push_back(watch.cpu_ms() * 1000);
    }
    std::sort(cpu_us.begin(), cpu_us.end());
    std::printf("commit %zu (%s) again %zu times: cpu p50 %.0f us\n", repeat,
                stream.kinds[repeat - 1].c_str(), times, cpu_us[cpu_us.size() / 2]);
  }
  return 0;
}
