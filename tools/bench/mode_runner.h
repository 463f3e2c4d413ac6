// The modes section of yoke_stream_bench: one stream of single-action commits (a city graph
// under the tail mix, aimed at a max-weight pool as `yoke gen stream --mix tail` aims it)
// replayed through a pool of each mode, every commit timed alone. The figure it exists for is
// the ratio of each mode's repair p50 and p99 to max-weight's on the same stream (issue 13's
// target: max-cardinality p50 within 3x of max-weight).
#pragma once

#include <cstddef>
#include <cstdint>
#include <iosfwd>
#include <string>
#include <vector>

#include "yoke/types.h"
#include "tools/bench/spread.h"

namespace yoke::bench {

struct ModeSetting {
  std::string name;  // "modes/city-20k"
  std::size_t vertices = 0;
  std::size_t actions = 0;  // single-action commits after the base graph
};

struct ModeFigures {
  Mode mode = Mode::max_weight;
  double load_ms = 0;     // the base graph, solved from scratch
  Spread repair_us;       // wall clock per commit
  Spread repair_cpu_us;   // this thread's CPU time per commit
  Spread touched;         // RepairStats::vertices_touched per commit
  std::size_t changed_commits = 0;  // commits that changed at least one pair
  std::size_t pairs_at_end = 0;
  bool certified = false;  // the final state's certificate holds (check_certificate)
};

struct ModeResult {
  ModeSetting setting;
  std::uint64_t seed = 0;
  std::size_t base_vertices = 0;
  std::size_t base_edges = 0;
  std::vector<ModeFigures> modes;  // max-weight first
  bool ok() const;                 // every mode's final certificate holds
};

// One setting per size: `actions` single-action commits on the city graph of that size.
std::vector<ModeSetting> mode_settings(const std::vector<std::size_t>& sizes, std::size_t actions);

// Draws the stream once, then replays it through a pool of each mode (max-weight,
// max-cardinality, perfect). Cost: three replays of the stream.
ModeResult run_modes(const ModeSetting& setting, std::uint64_t seed);

void print_modes_preamble(std::ostream& out);
// One table per setting: a row per mode, with its p50 and p99 as multiples of max-weight's.
void print_modes(std::ostream& out, const ModeResult& result);

}  // namespace yoke::bench
