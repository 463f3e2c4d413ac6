// yoke_bench: yoke::solve against LEMON's MaxWeightedMatching on the same seeded graphs, in
// the same process and the same run, reporting time and peak heap ratios. Exits non-zero when
// the two weights differ or yoke's answer fails its checks.
//
//   yoke_bench [--quick] [--only NAME]... [--repeat R] [--seed S] [--list]
#include <algorithm>
#include <cstdlib>
#include <iostream>
#include <string>
#include <vector>

#include "tools/bench/heap_counter.h"
#include "tools/bench/instances.h"
#include "tools/bench/lemon_runner.h"
#include "tools/bench/report.h"
#include "tools/bench/stopwatch.h"
#include "tools/bench/yoke_runner.h"

namespace yoke::bench {
namespace {

constexpr int kUsageError = 2;

struct Options {
  bool quick = false;
  bool list = false;
  int repeats = 1;
  std::uint64_t seed = 1;
  std::vector<std::string> only;  // instance names or families; empty = all
};

[[noreturn]] void usage(const std::string& problem) {
  if (!problem.empty()) std::cerr << "yoke_bench: " << problem << "\n";
  std::cerr << "usage: yoke_bench [--quick] [--only NAME]... [--repeat R] [--seed S] [--list]\n"
               "  --quick      small instances of every family (a smoke test, seconds)\n"
               "  --only NAME  run only the instance or family NAME (repeatable)\n"
               "  --repeat R   run each solver R times per instance, report the median time\n"
               "  --seed S     generator seed (default 1)\n"
               "  --list       list the instances and exit\n";
  std::exit(problem.empty() ? 0 : kUsageError);
}

std::uint64_t parse_number(const std::string& flag, const char* text, std::uint64_t at_least) {
  char* end = nullptr;
  const unsigned long long value = std::strtoull(text, &end, 10);
  if (*text == '\0' || *end != '\0' || *text == '-' || value < at_least) {
    usage(flag + " needs a whole number >= " + std::to_string(at_least) + ", got '" + text + "'");
  }
  return value;
}

Options parse(int argc, char** argv) {
  Options options;
  for (int i = 1; i < argc; ++i) {
    const std::string arg = argv[i];
    auto value = [&]() -> const char* {
      if (i + 1 >= argc) usage(arg + " needs a value");
      return argv[++i];
    };
    if (arg == "--quick") {
      options.quick = true;
    } else if (arg == "--list") {
      options.list = true;
    } else if (arg == "--only") {
      options.only.emplace_back(value());
    } else if (arg == "--repeat") {
      options.repeats = static_cast<int>(std::min<std::uint64_t>(parse_number(arg, value(), 1), 1000));
    } else if (arg == "--seed") {
      options.seed = parse_number(arg, value(), 0);
    } else if (arg == "--help" || arg == "-h") {
      usage("");
    } else {
      usage("unknown argument '" + arg + "'");
    }
  }
  return options;
}

std::vector<Instance> selected(const Options& options) {
  std::vector<Instance> all =
      options.quick ? quick_instances(options.seed) : default_instances(options.seed);
  if (options.only.empty()) return all;
  std::vector<Instance> chosen;
  for (const Instance& instance : all) {
    if (std::any_of(options.only.begin(), options.only.end(), [&](const std::string& name) {
          return name == instance.name || name == instance.family;
        })) {
      chosen.push_back(instance);
    }
  }
  for (const std::string& name : options.only) {
    if (std::none_of(all.begin(), all.end(), [&](const Instance& instance) {
          return name == instance.name || name == instance.family;
        })) {
      usage("no instance or family named '" + name + "' (see --list" +
            std::string(options.quick ? "" : "; add --quick for the small set") + ")");
    }
  }
  return chosen;
}

double median(std::vector<double> values) {
  std::sort(values.begin(), values.end());
  const std::size_t mid = values.size() / 2;
  return values.size() % 2 == 1 ? values[mid] : (values[mid - 1] + values[mid]) / 2;
}

// Median times over the repeats (timings vary run to run); the largest peak (the figure is
// deterministic, the max only guards against surprises); results from the first run.
SolverRun summarise(const std::vector<SolverRun>& runs) {
  SolverRun summary = runs.front();
  std::vector<double> wall;
  std::vector<double> cpu;
  for (const SolverRun& run : runs) {
    wall.push_back(run.solve_ms);
    cpu.push_back(run.solve_cpu_ms);
    summary.peak_bytes = std::max(summary.peak_bytes, run.peak_bytes);
    if (!run.valid && summary.valid) {
      summary.valid = false;
      summary.failure = run.failure;
    }
    // Both solvers are deterministic: a weight that moves between repeats is a bug too.
    if (run.weight != summary.weight && summary.valid) {
      summary.valid = false;
      summary.failure = "weight changed between repeats: " + std::to_string(summary.weight) +
                        " then " + std::to_string(run.weight);
    }
  }
  summary.solve_ms = median(wall);
  summary.solve_cpu_ms = median(cpu);
  return summary;
}

InstanceResult measure(const Instance& instance, int repeats) {
  InstanceResult result;
  result.name = instance.name;
  result.family = instance.family;
  result.repeats = repeats;
  const Stopwatch watch;
  const gen::GeneratedGraph graph = instance.make();
  result.generate_ms = watch.elapsed_ms();
  result.vertices = graph.vertex_count;
  result.edges = graph.edges.size();

  std::vector<SolverRun> yoke_runs;
  std::vector<SolverRun> lemon_runs;
  for (int r = 0; r < repeats; ++r) {
    // Alternate who goes first so neither always gets the warmer (or colder) machine.
    if (r % 2 == 0) {
      yoke_runs.push_back(run_yoke(graph));
      lemon_runs.push_back(run_lemon(graph));
    } else {
      lemon_runs.push_back(run_lemon(graph));
      yoke_runs.push_back(run_yoke(graph));
    }
  }
  result.yoke = summarise(yoke_runs);
  result.lemon = summarise(lemon_runs);
  return result;
}

}  // namespace
}  // namespace yoke::bench

int main(int argc, char** argv) {
  using namespace yoke::bench;
  const Options options = parse(argc, argv);
  const std::vector<Instance> instances = selected(options);
  if (options.list) {
    for (const Instance& instance : instances) {
      std::cout << instance.name << "  (" << instance.family << ")\n";
    }
    return 0;
  }

  if (!heap::counting_works()) {
    std::cerr << "yoke_bench: the counting operator new is not in use; memory figures would be "
                 "wrong\n";
    return 1;
  }
  print_preamble(std::cout, command_line(argc, argv), options.repeats, options.seed);
  std::vector<InstanceResult> results;
  bool all_ok = true;
  for (const Instance& instance : instances) {
    results.push_back(measure(instance, options.repeats));
    print_instance(std::cout, results.back());
    all_ok = all_ok && results.back().ok();
  }
  print_table(std::cout, results);
  if (!all_ok) {
    std::cout << "\nFAILED: yoke and LEMON disagree, or yoke's answer failed its checks (see "
                 "above)\n";
    return 1;
  }
  return 0;
}
