#include "edge_list_reader.h"

#include <algorithm>
#include <array>
#include <optional>

#include "duplicate_edges.h"
#include "edge_list_syntax.h"
#include "id_map.h"
#include "tokens.h"

namespace yoke::formats {
namespace {

struct DataLine {
  std::string_view text;  // without its newline, leading blanks removed
  std::size_t number;     // 1-based
};

// Walks the lines of an edge list that carry data, skipping blank lines and comments.
class DataLines {
 public:
  explicit DataLines(std::string_view text) : rest_(text) {}

  bool next(DataLine& line) {
    while (!rest_.empty()) {
      const std::size_t newline = rest_.find('\n');
      std::string_view text = rest_.substr(0, newline);
      rest_.remove_prefix(newline == std::string_view::npos ? rest_.size() : newline + 1);
      ++number_;
      while (!text.empty() && is_blank(text.front())) text.remove_prefix(1);
      if (text.empty() || text.front() == edge_list_syntax::kComment) continue;
      line = {text, number_};
      return true;
    }
    return false;
  }

 private:
  std::string_view rest_;
  std::size_t number_ = 0;
};

struct Fields {
  std::array<std::string_view, edge_list_syntax::kFields> values;
  std::size_t count = 0;  // all fields on the line, also beyond the three kept
};

Fields split_fields(std::string_view line) {
  Fields fields;
  std::size_t i = 0;
  while (i < line.size()) {
    while (i < line.size() && is_blank(line[i])) ++i;
    if (i == line.size()) break;
    const std::size_t start = i;
    while (i < line.size() && !is_blank(line[i])) ++i;
    if (fields.count < fields.values.size()) {
      fields.values[fields.count] = line.substr(start, i - start);
    }
    ++fields.count;
  }
  return fields;
}

std::uint64_t parse_vertex_id(std::string_view token, std::size_t line) {
  std::uint64_t id = 0;
  if (auto problem = parse_integer(token, id, "vertex id")) {
    throw EdgeListError(line, *problem);
  }
  return id;
}

Weight parse_weight(std::string_view token, std::size_t line) {
  Weight weight = 0;
  if (auto problem = parse_integer(token, weight, "weight")) {
    throw EdgeListError(line, *problem);
  }
  return weight;
}

Vertex intern_vertex(IdMap& ids, std::uint64_t id, std::size_t line) {
  const Vertex v = ids.intern(id);
  if (v == kNoVertex) {
    throw EdgeListError(line, "too many distinct vertex ids (at most 4294967294)");
  }
  return v;
}

Edge parse_edge(const DataLine& line, IdMap& ids) {
  const Fields fields = split_fields(line.text);
  if (fields.count != edge_list_syntax::kFields) {
    throw EdgeListError(line.number, "expected " + std::to_string(edge_list_syntax::kFields) +
                                         " fields '" + std::string(edge_list_syntax::kFieldNames) +
                                         "', found " + std::to_string(fields.count));
  }
  const std::uint64_t u = parse_vertex_id(fields.values[0], line.number);
  const std::uint64_t v = parse_vertex_id(fields.values[1], line.number);
  const Weight w = parse_weight(fields.values[2], line.number);
  if (u == v) throw EdgeListError(line.number, "self loop on vertex " + std::to_string(u));
  const Vertex a = intern_vertex(ids, u, line.number);
  const Vertex b = intern_vertex(ids, v, line.number);
  return {a, b, w};
}

// The line numbers of the data lines with the given indices (first < second): a second pass,
// paid only when reporting a duplicate, instead of a line number kept for every edge.
std::pair<std::size_t, std::size_t> lines_of_edges(std::string_view text, std::size_t first,
                                                   std::size_t second) {
  DataLines lines(text);
  DataLine line{};
  std::size_t first_line = 0;
  for (std::size_t index = 0; lines.next(line); ++index) {
    if (index == first) first_line = line.number;
    if (index == second) return {first_line, line.number};
  }
  return {first_line, 0};  // unreachable: every edge came from a data line
}

}  // namespace

EdgeList parse_edge_list(std::string_view text) {
  const auto line_count = static_cast<std::size_t>(std::count(text.begin(), text.end(), '\n')) + 1;
  // Ids up to twice the line count (ids 0..n-1 in practice) take the direct-indexed path.
  IdMap ids(std::max<std::uint64_t>(IdMap::kDefaultDirectLimit, 2 * std::uint64_t{line_count}));
  std::vector<Edge> edges;
  edges.reserve(line_count);

  // Stop at the first bad line, but report a duplicate that comes before it first, so that the
  // error is always the earliest one in the file.
  std::optional<EdgeListError> bad_line;
  DataLines lines(text);
  DataLine line{};
  while (lines.next(line)) {
    if (edges.size() + 1 >= kNoEdge) {
      bad_line.emplace(line.number, "too many edges (at most 4294967294)");
      break;
    }
    try {
      edges.push_back(parse_edge(line, ids));
    } catch (const EdgeListError& error) {
      bad_line = error;
      break;
    }
  }

  if (const auto duplicate = find_first_duplicate(ids.size(), edges)) {
    const auto [first_line, repeat_line] =
        lines_of_edges(text, duplicate->first, duplicate->repeat);
    const Edge& repeat = edges[duplicate->repeat];
    throw EdgeListError(repeat_line, "duplicate edge between " +
                                         std::to_string(ids.ids()[repeat.a]) + " and " +
                                         std::to_string(ids.ids()[repeat.b]) +
                                         " (first given on line " + std::to_string(first_line) +
                                         ")");
  }
  if (bad_line) throw *bad_line;

  edges.shrink_to_fit();
  return {ids.release_ids(), std::move(edges)};
}

}  // namespace yoke::formats
