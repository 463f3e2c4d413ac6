// yoke_class_probe: how often the classes by maximum matchings (Gallai-Edmonds,
// docs/mathematics.md §9) change along the modes section's stream, and what finding them costs
// next to a max-cardinality repair. The split design of §9 keeps the class prices apart from
// the weight prices; this measures the part it would have to keep up to date.
//
//   yoke_class_probe [--vertices N] [--actions A] [--seed S]
//
// The stream is yoke_stream_bench's modes stream (aimed_stream.h: --mix tail over a city
// graph, one action per commit), replayed into a max-cardinality pool. After every commit the
// pool is exported (not timed) and the classes are found from its matching (timed, CPU);
// vertices are compared with the previous commit's classes by key. Prints, per action kind:
// commits, commits that changed some vertex's class, vertices changed (p50 / max over those
// commits), the class search's CPU time, the same commit's in a max-weight pool (replayed
// first) and in the max-cardinality pool (p50), and the latter's p50 apart for
// commits that start from a perfectly matchable graph (D empty) and from one with D, with the
// vertices each touched (RepairStats::vertices_touched).
#include <algorithm>
#include <cstdio>
#include <map>
#include <string>
#include <unordered_map>
#include <vector>

#include <CLI/CLI.hpp>

#include "solver/cardinality_classes.h"
#include "tools/bench/aimed_stream.h"
#include "tools/bench/stopwatch.h"
#include "yoke/pool.h"

namespace yoke::bench {
namespace {

double percentile(std::vector<double> values, double q) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  return values[static_cast<std::size_t>(q * static_cast<double>(values.size() - 1))];
}

struct KindFigures {
  std::size_t commits = 0;
  std::size_t changed = 0;
  std::vector<double> vertices_changed;  // over the commits that changed some class
  std::vector<double> classes_us;
  std::vector<double> commit_us;
  std::vector<double> commit_us_perfect;  // the graph before the commit had a perfect matching
  std::vector<double> commit_us_odd;      // it had a missable vertex
  std::vector<double> max_weight_us;      // the same commit in a max-weight pool
  std::vector<double> touched_perfect;    // vertices the commit touched, by state before it
  std::vector<double> touched_odd;
};

using ClassByKey = std::unordered_map<VertexKey, MatchClass>;

struct Snapshot {
  ClassByKey classes;
  std::size_t missable = 0, neighbours = 0, paired = 0, parts = 0, largest_part = 0;
  double search_us = 0;
};

Snapshot classes_of(const Pool& pool) {
  const PoolExport exported = pool.export_certified();
  Snapshot s;
  const Stopwatch watch;
  const CardinalityClasses classes = cardinality_classes(exported.graph, exported.certificate.mate);
  s.search_us = watch.cpu_ms() * 1000;
  if (!classes.maximum) {
    std::fprintf(stderr, "the pool's matching is not maximum\n");
    std::exit(1);
  }
  for (std::size_t v = 0; v < classes.of.size(); ++v) {
    s.classes[exported.keys[v]] = classes.of[v];
    s.missable += classes.of[v] == MatchClass::missable;
    s.neighbours += classes.of[v] == MatchClass::neighbour;
    s.paired += classes.of[v] == MatchClass::always_paired;
  }
  s.parts = classes.parts.size();
  for (const auto& part : classes.parts) s.largest_part = std::max(s.largest_part, part.size());
  return s;
}

std::size_t changed_vertices(const ClassByKey& before, const ClassByKey& after) {
  std::size_t changed = 0;
  for (const auto& [key, cls] : after) {
    const auto it = before.find(key);
    changed += it == before.end() || it->second != cls;
  }
  for (const auto& [key, cls] : before) changed += after.find(key) == after.end();
  return changed;
}

void print_snapshot(const char* when, const Snapshot& s) {
  std::printf("%s: D %zu, A %zu, C %zu; %zu parts of G[D], the largest %zu vertices; class search %.0f us\n",
              when, s.missable, s.neighbours, s.paired, s.parts, s.largest_part, s.search_us);
}

int run(std::size_t vertices, std::size_t actions, std::uint64_t seed) {
  const AimedStream stream = draw_aimed_stream(aimed_tail_spec(vertices, actions, seed));
  std::printf("# yoke_class_probe --vertices %zu --actions %zu --seed %llu\n", vertices, actions,
              static_cast<unsigned long long>(seed));
  std::printf("stream: the modes section's (--mix tail, aimed at max-weight), %zu vertices, %zu edges, %zu commits\n",
              stream.base_vertices, stream.base_edges, stream.batches.size());
  // The reference: the same commits in a max-weight pool, CPU time of each.
  std::vector<double> reference_us;
  {
    Pool reference(Mode::max_weight);
    reference.commit(stream.base);
    for (const auto& batch : stream.batches) {
      const Stopwatch watch;
      reference.commit(batch);
      reference_us.push_back(watch.cpu_ms() * 1000);
    }
  }
  Pool pool(Mode::max_cardinality);
  pool.commit(stream.base);
  Snapshot last = classes_of(pool);
  print_snapshot("after the base graph", last);
  std::map<std::string, KindFigures> kinds;
  KindFigures all;
  for (std::size_t c = 0; c < stream.batches.size(); ++c) {
    const Stopwatch watch;
    const CommitResult committed = pool.commit(stream.batches[c]);
    const double commit_us = watch.cpu_ms() * 1000;
    const auto touched = static_cast<double>(committed.stats.vertices_touched);
    Snapshot next = classes_of(pool);
    const std::size_t changed = changed_vertices(last.classes, next.classes);
    for (KindFigures* k : {&kinds[stream.kinds[c]], &all}) {
      ++k->commits;
      k->classes_us.push_back(next.search_us);
      k->commit_us.push_back(commit_us);
      k->max_weight_us.push_back(reference_us[c]);
      (last.missable == 0 ? k->commit_us_perfect : k->commit_us_odd).push_back(commit_us);
      (last.missable == 0 ? k->touched_perfect : k->touched_odd).push_back(touched);
      if (changed > 0) {
        ++k->changed;
        k->vertices_changed.push_back(static_cast<double>(changed));
      }
    }
    last = std::move(next);
  }
  print_snapshot("after the last commit", last);
  std::printf("\n| action | commits | commits changing classes | vertices changed p50 | max | class search us p50 | max-weight commit us p50 | max-cardinality commit us p50 | after a perfect state: commits, p50, touched p50 | after a state with D: commits, p50, touched p50 |\n"
              "|---|---|---|---|---|---|---|---|---|---|---|---|---|---|\n");
  auto row = [](const std::string& name, const KindFigures& k) {
    std::printf("| %s | %zu | %zu | %.0f | %.0f | %.0f | %.0f | %.0f | %zu | %.0f | %.0f | %zu | %.0f | %.0f |\n", name.c_str(),
                k.commits, k.changed, percentile(k.vertices_changed, 0.5), percentile(k.vertices_changed, 1.0),
                percentile(k.classes_us, 0.5), percentile(k.max_weight_us, 0.5), percentile(k.commit_us, 0.5), k.commit_us_perfect.size(),
                percentile(k.commit_us_perfect, 0.5), percentile(k.touched_perfect, 0.5), k.commit_us_odd.size(),
                percentile(k.commit_us_odd, 0.5), percentile(k.touched_odd, 0.5));
  };
  for (const auto& [name, k] : kinds) row(name, k);
  row("all", all);
  return 0;
}

}  // namespace
}  // namespace yoke::bench

int main(int argc, char** argv) {
  CLI::App app{"How often the classes by maximum matchings change along the modes stream"};
  std::size_t vertices = 20000;
  std::size_t actions = 400;
  std::uint64_t seed = 1;
  app.add_option("--vertices", vertices, "Vertices of the city graph")->check(CLI::Range(100, 1000000));
  app.add_option("--actions", actions, "Commits after the base graph, one action each")->check(CLI::Range(1, 100000));
  app.add_option("--seed", seed, "Seed of the stream");
  CLI11_PARSE(app, argc, argv);
  return yoke::bench::run(vertices, actions, seed);
}
