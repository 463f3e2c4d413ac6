#include <algorithm>
#include <cstdio>

#include "cluster_sections.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::bench {

PoolBatches draw_pool(std::size_t vertices, std::size_t events, std::size_t batch,
                      std::size_t base_chunk, std::uint64_t seed, const std::string& pool,
                      const std::string& client_id) {
  gen::StreamSpec spec;
  spec.family = gen::StreamFamily::city;
  spec.vertices = vertices;
  spec.events = events;
  spec.batch_min = spec.batch_max = batch;
  spec.seed = seed;
  gen::EventStream stream(spec);
  std::vector<std::vector<Event>> batches;
  std::vector<Event> next;
  PoolBatches out;
  // The first batch is the base graph: its vertices first, so any prefix of it is valid.
  if (stream.next_batch(next)) {
    out.base_events = next.size();
    for (std::size_t at = 0; at < next.size(); at += base_chunk) {
      const auto end = next.begin() + static_cast<std::ptrdiff_t>(std::min(next.size(), at + base_chunk));
      batches.emplace_back(next.begin() + static_cast<std::ptrdiff_t>(at), end);
    }
    out.base_count = batches.size();
  }
  while (stream.next_batch(next)) batches.push_back(next);
  out.batches = encode_batches(batches, client_id, pool, 1);
  return out;
}

LoadResult load_base(zmq::context_t& context, const std::string& ingest, const PoolBatches& pool) {
  return send_pipelined(context, ingest, pool.batches, 0, pool.base_count, 1);
}

std::string latency_ms_text(const std::vector<double>& latency_us) {
  char text[160];
  std::snprintf(text, sizeof text, "p50 %7.2f ms  p90 %7.2f ms  p99 %7.2f ms  max %7.2f ms",
                percentile(latency_us, 50) / 1000, percentile(latency_us, 90) / 1000,
                percentile(latency_us, 99) / 1000, percentile(latency_us, 100) / 1000);
  return text;
}

}  // namespace yoke::bench
