#include "edge_list.h"

#include <algorithm>
#include <charconv>
#include <set>
#include <sstream>
#include <stdexcept>
#include <string>
#include <unordered_map>
#include <utility>

namespace yoke::oracle {
namespace {

template <class Number>
bool parse(const std::string& token, Number& value) {
  const char* end = token.data() + token.size();
  const auto [stop, error] = std::from_chars(token.data(), end, value);
  return error == std::errc{} && stop == end;
}

}  // namespace

LoadedEdgeList read_edge_list(std::istream& in) {
  LoadedEdgeList loaded;
  std::unordered_map<std::uint64_t, Vertex> dense;
  std::set<std::pair<Vertex, Vertex>> seen;
  std::vector<Edge> edges;
  const auto vertex_of = [&](std::uint64_t id) {
    const auto [it, inserted] = dense.emplace(id, static_cast<Vertex>(loaded.ids.size()));
    if (inserted) loaded.ids.push_back(id);
    return it->second;
  };
  std::string line;
  for (std::size_t number = 1; std::getline(in, line); ++number) {
    std::istringstream fields(line);
    std::string u, v, w, extra;
    if (!(fields >> u) || u.front() == '#') continue;
    std::uint64_t a = 0, b = 0;
    Weight weight = 0;
    if (!(fields >> v >> w) || (fields >> extra) || !parse(u, a) || !parse(v, b) ||
        !parse(w, weight)) {
      throw std::runtime_error("line " + std::to_string(number) + ": expected 'U V W'");
    }
    if (a == b) throw std::runtime_error("line " + std::to_string(number) + ": self loop");
    const Vertex da = vertex_of(a), db = vertex_of(b);
    if (!seen.insert(std::minmax(da, db)).second) {
      throw std::runtime_error("line " + std::to_string(number) + ": duplicate edge");
    }
    edges.push_back({da, db, weight});
  }
  loaded.graph = Graph::from_edges(loaded.ids.size(), std::move(edges));
  return loaded;
}

}  // namespace yoke::oracle
