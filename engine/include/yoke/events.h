// The events a pool takes: vertex arrivals and departures and edge weight changes, grouped in
// batches. A batch ends with a commit, after which the pool's matching is optimal again.
#pragma once

#include <cstdint>
#include <string>

#include "yoke/types.h"

namespace yoke {

// A vertex as the outside world names it: any 64-bit key. The pool maps keys to dense slots.
using VertexKey = std::uint64_t;

enum class EventKind : std::uint8_t {
  add_vertex,     // vertex u arrives with no edges (an error if it exists)
  set_edge,       // insert edge {u, v} or change its weight to w; u and v arrive if new
  unset_edge,     // remove edge {u, v} (an error if there is none); u and v stay
  remove_vertex,  // vertex u departs with all its edges (an error if it does not exist)
  // The pair {u, v} is matched from now on, whatever the weights, until release_pair {u, v},
  // unset_edge {u, v} or the departure of u or v (a dispatched courier). The edge {u, v} must
  // exist and neither end may be held already. The rest of the pool is optimised around it.
  hold_pair,
  release_pair,  // the pair {u, v} is optimised again (an error if it is not held)
};

struct Event {
  EventKind kind = EventKind::add_vertex;
  VertexKey u = 0;
  VertexKey v = 0;  // edge and pair events only
  Weight w = 0;     // set_edge only
};

// The event of a batch that a change of pairs goes back to: its index in the committed batch.
// kNoCause when the batch was solved from scratch (the pool was empty before it).
using EventCause = std::uint32_t;
inline constexpr EventCause kNoCause = 0xffffffffu;

// What was wrong with a rejected event.
enum class EventErrorCode : std::uint8_t {
  vertex_exists,        // add_vertex of a vertex that is alive
  self_loop,            // set_edge with u == v
  weight_out_of_range,  // |w| above the pool's bound
  unknown_vertex,       // remove_vertex, hold_pair or release_pair naming a vertex not alive
  unknown_edge,         // unset_edge of an edge that does not exist (an end not alive too)
  limit_exceeded,       // the batch would leave the pool above its vertex or edge limit
  already_held,         // hold_pair naming a vertex that is held
  not_held,             // release_pair of a pair that is not held
};

// Why an event of a batch was rejected: its position in the batch, what was wrong, and a
// message in words that names the values involved.
struct EventError {
  std::size_t index = 0;
  EventErrorCode code = EventErrorCode::unknown_vertex;
  std::string message;
};

}  // namespace yoke
