// What the edge-list and event-script loaders share about the tokens of a line: which bytes
// separate them, how an error message shows one, and how one is read as an integer.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace yoke::formats {

// The bytes between tokens: space, tab, '\r' (CRLF files), '\v', '\f'; never the newline,
// which ends a line.
inline bool is_blank(char c) {
  return c == ' ' || c == '\t' || c == '\r' || c == '\v' || c == '\f';
}

// A token as an error message shows it: quoted, cut short, control bytes escaped, so that a
// binary file or a 10 MB line cannot flood the terminal.
std::string shown(std::string_view token);

// Reads the whole token as an integer, or says why not ("weight '1x' is not an integer",
// "vertex id '-1' is not a non-negative integer", or out of range with the range) naming the
// token as `what`.
std::optional<std::string> parse_integer(std::string_view token, std::uint64_t& value,
                                         const char* what);
std::optional<std::string> parse_integer(std::string_view token, std::int64_t& value,
                                         const char* what);

}  // namespace yoke::formats
