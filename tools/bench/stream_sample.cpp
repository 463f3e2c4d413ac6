#include "tools/bench/stream_sample.h"

#include <vector>

#include "yoke/certificate.h"
#include "tools/bench/lemon_matching.h"
#include "tools/bench/lemon_runner.h"
#include "tools/bench/stopwatch.h"

namespace yoke::bench {

std::vector<std::size_t> sample_points(std::size_t commits, std::size_t k) {
  std::vector<std::size_t> points;
  for (std::size_t i = 1; i <= k && commits > 0; ++i) {
    const std::size_t at = (i * commits + k - 1) / k;
    if (points.empty() || points.back() != at) points.push_back(at);
  }
  return points;
}

LemonSample sample_against_lemon(const Pool& pool, std::uint64_t commit) {
  LemonSample sample;
  sample.commit = commit;
  sample.yoke_weight = pool.weight();
  std::vector<LemonEdge> edges;
  {
    const PoolExport exported = pool.export_certified();
    const Graph& graph = exported.graph;
    sample.vertices = graph.vertex_count();
    sample.edges = graph.edge_count();

    const CheckResult check = check_certificate(graph, exported.certificate);
    sample.certificate_holds = check.ok;
    sample.failure = check.failure;

    // The matching the certificate proves optimal, summed here so that the comparison with
    // LEMON does not rest on the pool's own running total.
    for (const Edge& e : graph.edges()) {
      if (exported.certificate.mate[e.a] == e.b) sample.certified_weight += e.w;
    }
    edges = lemon_edges(graph.edges());
  }  // the export is freed before LEMON's heap window opens

  const Stopwatch watch;
  const LemonOutcome lemon = lemon_max_weight_matching(sample.vertices, edges.data(), edges.size());
  sample.lemon_build_run_ms = watch.elapsed_ms();
  sample.lemon_run_ms = lemon.run_ms;
  sample.lemon_run_cpu_ms = lemon.run_cpu_ms;
  sample.lemon_peak_bytes = lemon.peak_bytes;
  sample.lemon_weight = lemon.weight;
  return sample;
}

}  // namespace yoke::bench
