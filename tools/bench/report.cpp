#include "tools/bench/report.h"

#include <ostream>
#include <string>

#include "tools/bench/lemon_matching.h"
#include "tools/bench/machine_facts.h"
#include "tools/bench/number_format.h"

#ifndef YOKE_BENCH_BUILD_TYPE
#define YOKE_BENCH_BUILD_TYPE "unknown"
#endif

namespace yoke::bench {
namespace {

std::string ms(double value) { return format(value < 10 ? "%.2f" : "%.1f", value); }

std::string ratio(double a, double b) { return b > 0 ? format("%.2f", a / b) : "n/a"; }

std::string certificate_word(const SolverRun& run) {
  if (!run.checked) return "not checked";
  return run.valid ? "holds" : "FAILS";
}

}  // namespace

std::string command_line(int argc, char** argv) {
  std::string line;
  for (int i = 0; i < argc; ++i) {
    std::string arg = argv[i];
    const bool plain = !arg.empty() && arg.find_first_of(" \t\n'\"\\$`*?&;|<>()") == std::string::npos;
    if (i > 0) line += ' ';
    if (plain) {
      line += arg;
    } else {
      line += '\'';
      for (char c : arg) line += c == '\'' ? std::string("'\\''") : std::string(1, c);
      line += '\'';
    }
  }
  return line;
}

void print_preamble(std::ostream& out, const std::string& command, int repeats,
                    std::uint64_t seed) {
  out << "# yoke benchmark: yoke::solve against LEMON " << lemon_version()
      << " MaxWeightedMatching, same graphs, same edge order, same run\n"
      << "command:  " << command << "\n"
      << "machine:  " << usable_cpus() << " CPUs (nproc), " << cpu_model() << "\n"
      << "load:     " << load_average() << " (1/5/15 min, at start)\n"
      << "compiler: " << __VERSION__ << ", build type " << YOKE_BENCH_BUILD_TYPE << "\n"
      << "settings: seed " << seed << ", " << repeats << " repeat(s), median time, max peak\n"
      << "timing:   the solve call only (yoke::solve, LEMON mwm.run()); graph building excluded;\n"
      << "          wall clock, and this thread's CPU time (steadier on a shared machine)\n"
      << "memory:   peak live heap bytes of graph representation + solver, both built inside "
         "the window\n"
      << "order:    yoke then LEMON on odd repeats, LEMON then yoke on even ones\n\n";
}

void print_instance(std::ostream& out, const InstanceResult& r) {
  out << r.name << " (" << r.family << "): n " << r.vertices << ", m " << r.edges
      << ", generated in " << ms(r.generate_ms) << " ms\n"
      << "  yoke   " << ms(r.yoke.solve_ms) << " ms (cpu " << ms(r.yoke.solve_cpu_ms)
      << " ms), peak " << mib(r.yoke.peak_bytes)
      << " MiB, weight " << r.yoke.weight << ", pairs " << r.yoke.pairs << ", certificate "
      << certificate_word(r.yoke) << "\n"
      << "  LEMON  " << ms(r.lemon.solve_ms) << " ms (cpu " << ms(r.lemon.solve_cpu_ms)
      << " ms), peak " << mib(r.lemon.peak_bytes)
      << " MiB, weight " << r.lemon.weight << ", pairs " << r.lemon.pairs << "\n"
      << "  yoke/LEMON: time " << ratio(r.yoke.solve_ms, r.lemon.solve_ms) << " (cpu "
      << ratio(r.yoke.solve_cpu_ms, r.lemon.solve_cpu_ms) << "), memory "
      << ratio(static_cast<double>(r.yoke.peak_bytes), static_cast<double>(r.lemon.peak_bytes))
      << "\n";
  if (!r.weights_equal()) {
    out << "  MISMATCH: yoke weight " << r.yoke.weight << " != LEMON weight " << r.lemon.weight
        << "\n";
  }
  if (!r.yoke.valid) out << "  FAILED CHECK (yoke): " << r.yoke.failure << "\n";
  if (!r.lemon.valid) out << "  FAILED CHECK (LEMON): " << r.lemon.failure << "\n";
  out << std::flush;
}

void print_table(std::ostream& out, const std::vector<InstanceResult>& results) {
  out << "\n| instance | n | m | yoke ms | LEMON ms | time yoke/LEMON | cpu yoke/LEMON | "
         "yoke MiB | LEMON MiB | memory yoke/LEMON | yoke weight | LEMON weight | weights | "
         "yoke certificate |\n"
      << "|---|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|---|---|\n";
  for (const InstanceResult& r : results) {
    out << "| " << r.name << " | " << r.vertices << " | " << r.edges << " | "
        << ms(r.yoke.solve_ms) << " | " << ms(r.lemon.solve_ms) << " | "
        << ratio(r.yoke.solve_ms, r.lemon.solve_ms) << " | "
        << ratio(r.yoke.solve_cpu_ms, r.lemon.solve_cpu_ms) << " | " << mib(r.yoke.peak_bytes)
        << " | "
        << mib(r.lemon.peak_bytes) << " | "
        << ratio(static_cast<double>(r.yoke.peak_bytes), static_cast<double>(r.lemon.peak_bytes))
        << " | " << r.yoke.weight << " | " << r.lemon.weight << " | "
        << (r.weights_equal() ? "equal" : "DIFFER") << " | " << certificate_word(r.yoke)
        << " |\n";
  }
}

}  // namespace yoke::bench
