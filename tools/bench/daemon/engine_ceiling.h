// The machine's ceiling for the multi-pool ratio: each pool's stream repaired by the engine
// alone, with no daemon, in a process of its own, all pools' processes at once. Processes, not
// threads of one process, because that is what two independent `yoke replay`s are: nothing of
// the daemon's process (its heap, its other threads) is shared, only the machine (cores,
// caches, memory). The daemon's ratio read as a share of this ratio is what yoked gets of what
// this machine gives two pools.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "yoke/events.h"

namespace yoke::bench {

using Batches = std::vector<std::vector<Event>>;

// A run of the engine alone over several pools' streams at once.
struct EngineRun {
  double events_per_second = 0;  // of wall time
  double cpu_us = 0;  // CPU time of the repairs over the timed part, microseconds per event
};

// One pool's city stream as the multi-pool run draws it: the base graph first, then batches.
struct CityStream {
  std::size_t vertices = 0;
  std::size_t events = 0;  // after the base graph
  std::size_t batch = 100;
  std::string mix = "bench";
  std::uint64_t seed = 0;
};

// The stream's batches: its base graph first, then batches of `stream.batch` events.
Batches city_batches(const CityStream& stream);

// The batches after the base graph joined in commits of at least `per_commit` events (the
// last may be smaller), as the daemon's windows join them.
Batches commits_of(const Batches& batches, std::size_t per_commit);

// Events per second of wall time of one process per stream, each repairing its stream alone
// (base graph first, before the clock) in commits of `per_commit` events, all at once: the
// clock runs from the moment every process is told to start to the last one's end. The
// processes are this program started again (`self`) with ceiling_child_arguments().
EngineRun processes_events_per_second(const std::string& self,
                                       const std::vector<CityStream>& streams,
                                       std::size_t per_commit);

// The first argument that makes this program a ceiling child (ceiling_child_main()).
inline constexpr const char* kCeilingChildFlag = "--ceiling-child";

// A child's part: argv is {program, kCeilingChildFlag, vertices, events, batch, mix, seed,
// per_commit}. Draws the stream, commits the base graph, writes "ready" on stdout, waits for a
// line on stdin, commits the rest, writes "done" and the CPU seconds that took. Returns the exit status.
int ceiling_child_main(int argc, char** argv);

}  // namespace yoke::bench
