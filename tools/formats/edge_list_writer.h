// The writer of the edge list (syntax: edge_list_syntax.h; prose: docs/formats.md, "Edge
// list"): `yoke gen` writes graphs with it, and the oracle tests their reproducers. One line
// `U V W` per edge, single spaces, no comments.
#pragma once

#include <cstdint>
#include <ostream>
#include <span>
#include <vector>

#include "yoke/graph.h"

namespace yoke::formats {

// Writes `edges` in order. `ids`, when not empty, maps each dense vertex to the external id
// written; it must cover every endpoint (std::invalid_argument otherwise, before anything is
// written). Cost O(m), buffered.
void write_edge_list(std::ostream& out, std::span<const Edge> edges,
                     std::span<const std::uint64_t> ids = {});

}  // namespace yoke::formats
