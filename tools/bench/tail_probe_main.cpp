// yoke_tail_probe: what the heaviest single-action commits of yoke_stream_bench's tail section
// do (README "The repair's tail, per kind of event"). Replays the same aimed stream (city
// graph, --mix tail, one action per commit) into a max-weight pool and prints, per kind, the
// commits at or above the kind's p98 of vertices touched and of CPU time (and the commits that
// changed no pair but touched more than 2,000) with the repair's counters: vertices
// touched, of those pushed by the events' dissolving, blossoms left owing their push, roots,
// trees, augmentations, blossoms dissolved by events, formed and expanded by the search, dual
// steps, pairs changed, CPU us.
//
//   yoke_tail_probe [--vertices N] [--actions A] [--seed S] [--weight-grain G] [--kind K]...
//                   [--repeat C --times K] [--script FILE]
//
// --script replays an event script (yoke gen stream ... --action-batches) instead, all its
// commits under one kind. --repeat C commits batch C again K times from the pool's saved state
// before it (for a profiler: the saving and restoring are outside the commit) and prints its CPU
// time p50.
#include <algorithm>
#include <cstdio>
#include <fstream>
#include <iterator>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "tools/bench/aimed_stream.h"
#include "tools/bench/stopwatch.h"
#include "tools/bench/tail_runner.h"
#include "tools/formats/event_script_reader.h"
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
  // The top 2% by vertices touched, then the top 2% by CPU time not shown yet, then every commit
  // that changed no pair and touched more than the idle limit.
  const std::size_t top = std::max<std::size_t>(1, (rows.size() + 49) / 50);
  std::vector<Row> shown(rows.begin(), rows.begin() + static_cast<std::ptrdiff_t>(top));
  std::vector<Row> by_cpu = rows;
  std::sort(by_cpu.begin(), by_cpu.end(),
            [](const Row& x, const Row& y) { return x.cpu_us > y.cpu_us; });
  auto shown_already = [&](const Row& r) {
    return std::any_of(shown.begin(), shown.end(),
                       [&](const Row& s) { return s.commit == r.commit; });
  };
  for (std::size_t i = 0; i < top; ++i) {
    if (!shown_already(by_cpu[i])) shown.push_back(by_cpu[i]);
  }
  for (std::size_t i = top; i < rows.size(); ++i) {
    if (rows[i].changed == 0 && static_cast<double>(rows[i].stats.vertices_touched) > kIdleTouchLimit &&
        !shown_already(rows[i])) {
      shown.push_back(rows[i]);
    }
  }
  std::printf(
      "%s: %zu commits, the %zu heaviest by vertices touched, by CPU, and the idle ones above %.0f "
      "touched\n",
      kind.c_str(), rows.size(), top, kIdleTouchLimit);
  std::printf("  %7s %8s %9s %6s %5s %5s %5s %9s %7s %8s %6s %7s %9s\n", "commit", "touched",
              "dissolved", "owing", "roots", "trees", "augm", "dissolves", "formed", "expanded",
              "steps", "changed", "cpu_us");
  for (const Row& r : shown) {
    const RepairStats& s = r.stats;
    std::printf("  %7zu %8llu %9llu %6llu %5llu %5llu %5llu %9llu %7llu %8llu %6llu %7zu %9.0f\n",
                r.commit, static_cast<unsigned long long>(s.vertices_touched),
                static_cast<unsigned long long>(s.vertices_dissolved),
                static_cast<unsigned long long>(s.blossoms_owing),
                static_cast<unsigned long long>(s.roots),
                static_cast<unsigned long long>(s.searches),
                static_cast<unsigned long long>(s.augmentations),
                static_cast<unsigned long long>(s.blossoms_dissolved),
                static_cast<unsigned long long>(s.blossoms_formed),
                static_cast<unsigned long long>(s.blossoms_expanded),
                static_cast<unsigned long long>(s.dual_steps), r.changed, r.cpu_us);
  }
}

AimedStream read_script(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  formats::EventScript parsed = formats::parse_event_script(text);
  AimedStream stream;
  for (std::size_t b = 0; b < parsed.batches.size(); ++b) {
    if (b == 0) {
      stream.base = std::move(parsed.batches[b].events);
    } else {
      stream.batches.push_back(std::move(parsed.batches[b].events));
      stream.kinds.emplace_back("script");
    }
  }
  return stream;
}

}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"The heaviest commits of the tail mix, with the repair's counters"};
  std::size_t vertices = 100000;
  std::size_t actions = 600;
  std::uint64_t seed = 1;
  Weight grain = 100;
  std::vector<std::string> kinds;
  app.add_option("--vertices", vertices, "Vertices of the city graph")
      ->check(CLI::Range(100, 1000000));
  app.add_option("--actions", actions, "Commits after the base graph, one action each")
      ->check(CLI::Range(1, 100000));
  app.add_option("--seed", seed, "Seed of the stream");
  app.add_option("--weight-grain", grain, "Weights rounded to multiples of it (1: as drawn)")
      ->check(CLI::Range(1, 100000));
  app.add_option("--kind", kinds, "Only these action kinds (default: all)");
  std::size_t repeat = 0;
  std::size_t times = 100;
  app.add_option("--repeat", repeat, "Commit this batch (1-based) again from the state before it");
  app.add_option("--times", times, "How often --repeat commits it")->check(CLI::Range(1, 100000));
  std::string mode = "max-weight";
  app.add_option("--mode", mode, "The pool's mode: max-weight, max-cardinality or perfect")
      ->check(CLI::IsMember({"max-weight", "max-cardinality", "perfect"}));
  std::string script;
  app.add_option("--script", script,
                 "An event script instead (yoke gen stream): its first batch is the base, every "
                 "later one a commit of kind 'script'")
      ->check(CLI::ExistingFile);
  CLI11_PARSE(app, argc, argv);

  const AimedStream stream =
      script.empty() ? draw_aimed_stream(aimed_tail_spec(vertices, actions, seed, grain))
                     : read_script(script);
  Pool pool(parse_mode(mode));
  pool.commit(stream.base);
  std::map<std::string, std::vector<Row>> by_kind;
  std::string before_repeat;
  for (std::size_t c = 0; c < stream.batches.size(); ++c) {
    if (c + 1 == repeat) before_repeat = pool.save();
    const Stopwatch watch;
    const CommitResult committed = pool.commit(stream.batches[c]);
    const double cpu_us = watch.cpu_ms() * 1000;
    by_kind[stream.kinds[c]].push_back({c + 1, committed.stats,
                                        committed.diff.removed.size() + committed.diff.added.size(),
                                        cpu_us});
  }
  if (script.empty()) {
    std::printf("city graph of %zu vertices, grain %lld, %zu actions, seed %llu\n", vertices,
                static_cast<long long>(grain), actions, static_cast<unsigned long long>(seed));
  } else {
    std::printf("%s: %zu batches after the first (commit c here is yoke replay's commit c + 1)\n",
                script.c_str(), stream.batches.size());
  }
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
