#include "tools/bench/aimed_stream.h"

#include "tools/bench/stream_settings.h"
#include "yoke/pool.h"

namespace yoke::bench {

gen::StreamSpec aimed_tail_spec(std::size_t vertices, std::size_t actions, std::uint64_t seed,
                                Weight weight_grain) {
  gen::StreamSpec spec;
  spec.family = gen::StreamFamily::city;
  spec.vertices = vertices;
  spec.degree = kStreamCityNeighbours;
  spec.seed = seed;
  spec.events = actions;
  spec.action_batches = true;
  spec.mix = gen::tail_mix();
  spec.arrival_edges = kArrivalEdges;
  spec.weight_grain = weight_grain;
  return spec;
}

AimedStream draw_aimed_stream(const gen::StreamSpec& spec) {
  AimedStream stored;
  gen::EventStream stream(spec);
  Pool aim(Mode::max_weight);
  stream.aim_at(&aim);
  stored.base_vertices = stream.base_vertices();
  stored.base_edges = stream.base_edges();
  stream.next_batch(stored.base);
  aim.commit(stored.base);
  std::vector<Event> batch;
  while (stream.next_batch(batch)) {
    aim.commit(batch);
    stored.batches.push_back(batch);
    stored.kinds.emplace_back(stream.last_action());
  }
  return stored;
}

}  // namespace yoke::bench
