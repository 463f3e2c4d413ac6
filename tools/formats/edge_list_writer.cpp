#include "edge_list_writer.h"

#include <algorithm>
#include <charconv>
#include <stdexcept>
#include <string>

namespace yoke::formats {

void write_edge_list(std::ostream& out, std::span<const Edge> edges,
                     std::span<const std::uint64_t> ids) {
  if (!ids.empty()) {
    const bool covered = std::all_of(edges.begin(), edges.end(), [&](const Edge& e) {
      return e.a < ids.size() && e.b < ids.size();
    });
    if (!covered) {
      throw std::invalid_argument("write_edge_list: ids has " + std::to_string(ids.size()) +
                                  " entries, fewer than the edges' vertices");
    }
  }
  // to_chars into one buffer: iostream formatting of millions of numbers is the slow part.
  constexpr std::size_t kBufferBytes = 1 << 16;
  std::string buffer;
  buffer.reserve(kBufferBytes);
  char field[24];
  auto put = [&](auto value, char after) {
    buffer.append(field, std::to_chars(field, field + sizeof field, value).ptr);
    buffer.push_back(after);
  };
  for (const Edge& e : edges) {
    put(ids.empty() ? std::uint64_t{e.a} : ids[e.a], ' ');
    put(ids.empty() ? std::uint64_t{e.b} : ids[e.b], ' ');
    put(e.w, '\n');
    if (buffer.size() > kBufferBytes - 80) {
      out.write(buffer.data(), static_cast<std::streamsize>(buffer.size()));
      buffer.clear();
    }
  }
  out.write(buffer.data(), static_cast<std::streamsize>(buffer.size()));
}

}  // namespace yoke::formats
