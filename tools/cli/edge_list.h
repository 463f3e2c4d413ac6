// The edge-list input of `yoke solve` and `yoke verify` (DESIGN.md section 6): one edge per
// line, "U V W", U and V unsigned 64-bit vertex ids, W a signed 64-bit weight. Blank lines and
// lines whose first non-blank character is '#' are ignored.
#pragma once

#include <cstdint>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

#include "engine/graph.h"

namespace yoke::cli {

struct EdgeList {
  std::vector<std::uint64_t> external_ids;  // external_ids[v]: the id of dense vertex v
  std::vector<Edge> edges;                  // dense endpoints, in file order
};

// A malformed edge list: the first offending line (1-based) and what is wrong with it.
class EdgeListError : public std::runtime_error {
 public:
  EdgeListError(std::size_t line, const std::string& problem);
  std::size_t line() const { return line_; }
  const std::string& problem() const { return problem_; }

 private:
  std::size_t line_;
  std::string problem_;
};

// Parses an edge list. Vertices are numbered densely in order of first appearance (U before V
// on each line). Throws EdgeListError for the earliest bad line: wrong number of fields, an id
// or weight that is not an integer or out of range, a self loop, or an edge given twice (in
// either orientation; the message names the line of the first occurrence). Weights are not
// checked against the engine's bounds here: solve() does that per mode.
// Cost O(size of text + n + m); temporary memory for duplicate detection O(n + m).
EdgeList parse_edge_list(std::string_view text);

// Reads `path` ("-" for stdin) whole and parses it. Throws CliError "FILE:LINE: problem".
EdgeList load_edge_list(const std::string& path);

}  // namespace yoke::cli
