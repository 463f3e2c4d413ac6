// Everything the benchmark prints: how it was run, on what machine, one block per instance,
// and the closing Markdown table.
#pragma once

#include <cstdint>
#include <iosfwd>
#include <string>
#include <vector>

#include "tools/bench/solver_run.h"

namespace yoke::bench {

struct InstanceResult {
  std::string name;
  std::string family;
  std::size_t vertices = 0;
  std::size_t edges = 0;
  double generate_ms = 0;
  int repeats = 0;
  SolverRun yoke;   // median solve time over the repeats, largest peak
  SolverRun lemon;  // likewise
  bool weights_equal() const { return yoke.weight == lemon.weight; }
  bool ok() const { return weights_equal() && yoke.valid && lemon.valid; }
};

// The exact command, shell-quoted where needed, so it can be pasted to rerun.
std::string command_line(int argc, char** argv);

// Command, machine (CPUs, CPU model, load), compiler, build type and LEMON version.
void print_preamble(std::ostream& out, const std::string& command, int repeats,
                    std::uint64_t seed);

void print_instance(std::ostream& out, const InstanceResult& result);

void print_table(std::ostream& out, const std::vector<InstanceResult>& results);

}  // namespace yoke::bench
