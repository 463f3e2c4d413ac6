// A seeded random stream that is identical on every platform and standard library.
//
// The std:: distributions are implementation-defined (libstdc++ and libc++ give different
// numbers for the same engine), so every draw here is our own: splitmix64 for the bits,
// rejection for bounded integers, and only exact IEEE operations for doubles.
#pragma once

#include <cstdint>

namespace yoke::gen {

class Rng {
 public:
  // `stream` separates independent streams drawn from one user seed (points, values, ...).
  explicit Rng(std::uint64_t seed, std::uint64_t stream = 0)
      : state_(seed ^ (stream * 0xD1B54A32D192ED03ULL)) {
    next();  // decorrelates nearby seeds before the first real draw
  }

  std::uint64_t next() {
    state_ += 0x9E3779B97F4A7C15ULL;
    std::uint64_t z = state_;
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
  }

  // Uniform in [0, bound); bound == 0 means the full 64-bit range. Exactly uniform: draws in
  // the short last block are rejected.
  std::uint64_t below(std::uint64_t bound) {
    if (bound == 0) return next();
    const std::uint64_t reject_under = (0 - bound) % bound;  // 2^64 mod bound
    for (;;) {
      const std::uint64_t x = next();
      if (x >= reject_under) return x % bound;
    }
  }

  // Uniform in [lo, hi]; requires lo <= hi (the full int64 range is allowed).
  std::int64_t between(std::int64_t lo, std::int64_t hi) {
    const std::uint64_t span = static_cast<std::uint64_t>(hi) - static_cast<std::uint64_t>(lo) + 1;
    return static_cast<std::int64_t>(static_cast<std::uint64_t>(lo) + below(span));
  }

  // Uniform in [0, 1) with 53 random bits.
  double unit() { return static_cast<double>(next() >> 11) * 0x1.0p-53; }

  bool chance(double p) { return unit() < p; }

 private:
  std::uint64_t state_;
};

}  // namespace yoke::gen
