// Reads the `yoke solve` edge-list format (docs/formats.md, "Edge list") into a dense graph, for
// the oracle programs that check a file. Independent of the CLI's own loader on purpose.
#pragma once

#include <cstdint>
#include <istream>
#include <vector>

#include "yoke/graph.h"

namespace yoke::oracle {

struct LoadedEdgeList {
  Graph graph;
  std::vector<std::uint64_t> ids;  // external id of each dense vertex, in order of appearance
};

// Throws std::runtime_error naming the line on a malformed line, a self loop or a duplicate.
LoadedEdgeList read_edge_list(std::istream& in);

}  // namespace yoke::oracle
