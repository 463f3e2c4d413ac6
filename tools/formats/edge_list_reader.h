// The reader of the edge list, the input of `yoke solve` and `yoke verify`: text to a graph of
// dense vertices. The syntax is in edge_list_syntax.h, its prose in docs/formats.md ("Edge
// list"); the writer is edge_list_writer.h.
#pragma once

#include <cstdint>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

#include "yoke/graph.h"
#include "tokens.h"

namespace yoke::formats {

struct EdgeList {
  std::vector<std::uint64_t> external_ids;  // external_ids[v]: the id of dense vertex v
  std::vector<Edge> edges;                  // dense endpoints, in file order
};

// A malformed edge list: the first offending line (1-based) and what is wrong with it.
class EdgeListError : public LineError {
 public:
  using LineError::LineError;
};

// Parses an edge list. Vertices are numbered densely in order of first appearance (U before V
// on each line). Throws EdgeListError for the earliest bad line: wrong number of fields, an id
// or weight that is not an integer or out of range, a self loop, or an edge given twice (in
// either orientation; the message names the line of the first occurrence). Weights are not
// checked against the engine's bounds here: solve() does that per mode.
// Cost O(size of text + n + m); temporary memory for duplicate detection O(n + m).
EdgeList parse_edge_list(std::string_view text);

}  // namespace yoke::formats
