// What the edge-list and event-script readers share about the lines and tokens of a text:
// which bytes separate tokens, how an error message shows one, how one is read as an integer,
// and the error that names a bad line.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <stdexcept>
#include <string>
#include <string_view>

namespace yoke::formats {

// A malformed line of a text format: the first offending line (1-based) and what is wrong with
// it. what() is "line N: problem".
class LineError : public std::runtime_error {
 public:
  LineError(std::size_t line, const std::string& problem);
  std::size_t line() const { return line_; }
  const std::string& problem() const { return problem_; }

 private:
  std::size_t line_;
  std::string problem_;
};

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
