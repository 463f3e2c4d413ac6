// How much a thread's dependent memory loads slow down while another thread does the same on
// the other core. A repair is mostly such loads (a scan misses on the far ends' per-vertex
// arrays), so on a machine where they slow down when both cores load, two pools' repairs at
// once each cost more CPU per event than one alone, whatever the daemon's own threads do:
// the multi-pool ratios are read against this (README, "The daemon under load").
#pragma once

#include <cstddef>
#include <cstdint>

namespace yoke::bench {

struct MemoryContention {
  std::size_t bytes = 0;     // each thread's array
  double alone_ns = 0;       // thread CPU per load, one thread
  double together_ns = 0;    // thread CPU per load, two threads at once (their mean)
  double ratio() const { return alone_ns > 0 ? together_ns / alone_ns : 0; }
};

// Chases `loads` dependent loads around one random cycle over `bytes` (a fixed seed), in one
// thread, then in two threads at once, each over its own array, three rounds, keeping the least
// time of each; the time is each thread's CPU time (CLOCK_THREAD_CPUTIME_ID), so other
// processes on the machine count only through what they share with it. O(bytes + loads).
MemoryContention measure_memory_contention(std::size_t bytes, std::uint64_t loads);

}  // namespace yoke::bench
