// A single-action city stream aimed at the pool it will be replayed into (`--mix tail`), drawn
// once and stored, so that timed replays see nothing of its generation. Shared by the tail
// section (per action kind) and the modes section (the same stream in every mode).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "tools/graphgen/event_stream.h"
#include "yoke/events.h"
#include "yoke/types.h"

namespace yoke::bench {

struct AimedStream {
  std::vector<Event> base;
  std::vector<std::vector<Event>> batches;
  std::vector<std::string> kinds;  // per batch: the action that drew it
  std::size_t base_vertices = 0;
  std::size_t base_edges = 0;
};

// The tail mix over a city graph, one action per batch; grain > 1 rounds weights to it (ties).
gen::StreamSpec aimed_tail_spec(std::size_t vertices, std::size_t actions, std::uint64_t seed,
                                Weight weight_grain = 1);

// Drawn with a max-weight pool of its own that commits every batch, so the aimed actions see
// the state a measured max-weight pool will have (both are deterministic and get the same
// batches). O(the stream's repairs).
AimedStream draw_aimed_stream(const gen::StreamSpec& spec);

}  // namespace yoke::bench
