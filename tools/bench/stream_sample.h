// One sample point of the stream benchmark: the pool, as it stands after a commit, exported
// and solved from scratch by LEMON (the reference time), with yoke's answer checked against
// LEMON's weight and by the independent certificate checker. Nothing here touches the pool.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "yoke/pool.h"

namespace yoke::bench {

struct LemonSample {
  std::uint64_t commit = 0;  // streamed commits before the sample (the base graph's not counted)
  std::size_t vertices = 0;
  std::size_t edges = 0;
  Weight yoke_weight = 0;         // Pool::weight(), the committed weight
  Weight certified_weight = 0;    // the export's certified matching, summed over its edges
  Weight lemon_weight = 0;
  double lemon_run_ms = 0;        // mwm.run() only: the reference for the ratios
  double lemon_run_cpu_ms = 0;
  double lemon_build_run_ms = 0;  // building ListGraph and weights, run(), freeing them
  std::size_t lemon_peak_bytes = 0;
  bool certificate_holds = false;
  std::string failure;  // why the certificate does not hold, in words

  bool weights_equal() const {
    return yoke_weight == lemon_weight && certified_weight == yoke_weight;
  }
  bool ok() const { return weights_equal() && certificate_holds; }
};

// Streamed-commit counts after which LEMON samples: ceil(i * commits / k) for i = 1..k, so the
// last sample sees the final state. O(k).
std::vector<std::size_t> sample_points(std::size_t commits, std::size_t k);

// Exports the pool (Pool::export_certified), checks its certificate (yoke::check_certificate),
// then times LEMON's MaxWeightedMatching on the exported graph, in its edge order. Opens its
// own heap window (see heap_counter.h): a caller measuring a peak must close theirs first.
LemonSample sample_against_lemon(const Pool& pool, std::uint64_t commit);

}  // namespace yoke::bench
