// Events spelled as the event script spells them (`add 4`, `set 1 2 50`, `hold 1 2`, ...), for tests that
// build batches by hand.
#pragma once

#include "yoke/events.h"

namespace yoke {

inline Event add(VertexKey u) { return {EventKind::add_vertex, u, 0, 0}; }
inline Event set(VertexKey u, VertexKey v, Weight w) { return {EventKind::set_edge, u, v, w}; }
inline Event unset(VertexKey u, VertexKey v) { return {EventKind::unset_edge, u, v, 0}; }
inline Event remove(VertexKey u) { return {EventKind::remove_vertex, u, 0, 0}; }
inline Event hold(VertexKey u, VertexKey v) { return {EventKind::hold_pair, u, v, 0}; }
inline Event release(VertexKey u, VertexKey v) { return {EventKind::release_pair, u, v, 0}; }

}  // namespace yoke
