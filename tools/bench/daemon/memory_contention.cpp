#include "memory_contention.h"

#include <algorithm>
#include <cstddef>
#include <latch>
#include <random>
#include <thread>
#include <utility>
#include <vector>

#include "tools/bench/stopwatch.h"

namespace yoke::bench {
namespace {

// One cycle through every index (Sattolo's shuffle), so the chase never settles in a short loop
// that the cache would hold.
std::vector<std::uint32_t> random_cycle(std::size_t n, std::uint32_t seed) {
  std::vector<std::uint32_t> next(n);
  for (std::size_t i = 0; i < n; ++i) next[i] = static_cast<std::uint32_t>(i);
  std::mt19937 random(seed);
  for (std::size_t i = n - 1; i > 0; --i) {
    std::uniform_int_distribution<std::size_t> pick(0, i - 1);
    std::swap(next[i], next[pick(random)]);
  }
  return next;
}

// CPU ns per load of `loads` dependent loads; the chase starts when `start` opens.
double chase(const std::vector<std::uint32_t>& next, std::uint64_t loads, std::latch& start) {
  start.arrive_and_wait();
  const Stopwatch clock;
  std::uint32_t at = 0;
  for (std::uint64_t i = 0; i < loads; ++i) at = next[at];
  const double cpu_ns = clock.cpu_ms() * 1e6;
  // The end point depends on every load: keep the compiler from dropping the loop.
  volatile std::uint32_t sink = at;
  (void)sink;
  return cpu_ns / static_cast<double>(loads);
}

// Mean CPU ns per load of `arrays.size()` threads chasing at once, one array each.
double chase_at_once(const std::vector<const std::vector<std::uint32_t>*>& arrays,
                     std::uint64_t loads) {
  std::latch start(static_cast<std::ptrdiff_t>(arrays.size()));
  std::vector<double> ns(arrays.size());
  std::vector<std::thread> threads;
  for (std::size_t t = 0; t < arrays.size(); ++t) {
    threads.emplace_back([&, t] { ns[t] = chase(*arrays[t], loads, start); });
  }
  for (std::thread& thread : threads) thread.join();
  double sum = 0;
  for (const double x : ns) sum += x;
  return sum / static_cast<double>(ns.size());
}

}  // namespace

MemoryContention measure_memory_contention(std::size_t bytes, std::uint64_t loads) {
  const std::size_t n = std::max<std::size_t>(bytes / sizeof(std::uint32_t), 2);
  const std::vector<std::uint32_t> first = random_cycle(n, 1);
  const std::vector<std::uint32_t> second = random_cycle(n, 2);
  MemoryContention result;
  result.bytes = n * sizeof(std::uint32_t);
  // Alternated three times, the least of each kept: other processes on the machine only ever
  // add to a thread's time (a vCPU's steal counts as its CPU), and the first rounds also warm.
  result.alone_ns = 1e300;
  result.together_ns = 1e300;
  for (int round = 0; round < 3; ++round) {
    result.alone_ns = std::min(result.alone_ns, chase_at_once({&first}, loads));
    result.together_ns = std::min(result.together_ns, chase_at_once({&first, &second}, loads));
  }
  return result;
}

}  // namespace yoke::bench
