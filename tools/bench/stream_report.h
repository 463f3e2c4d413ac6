// Everything yoke_stream_bench prints: how it was run and on what, one block per setting as it
// finishes, then Markdown tables of all settings with the targets beside the ratios.
#pragma once

#include <cstdint>
#include <iosfwd>
#include <string>
#include <vector>

#include "tools/bench/stream_runner.h"

namespace yoke::bench {

struct StreamRunInfo {
  std::string command;
  std::uint64_t seed = 1;
  std::size_t lemon_samples = 0;
};

// Command, machine, source commit, compiler, and what is timed, checked and counted.
void print_stream_preamble(std::ostream& out, const StreamRunInfo& info);

void print_setting(std::ostream& out, const StreamResult& result);

void print_stream_tables(std::ostream& out, const std::vector<StreamResult>& results);

}  // namespace yoke::bench
