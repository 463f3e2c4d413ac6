// The edge list's syntax, written down once: its prose is docs/formats.md ("Edge list"), and
// the reader (edge_list_reader.h) and the writer (edge_list_writer.h) take it from here.
//
//     # a comment line
//     U V W
//
// One edge per line: U and V unsigned 64-bit vertex ids, W a signed 64-bit weight, separated by
// blanks (tokens.h: is_blank). A line that is empty, blank, or whose first non-blank character
// is '#' is ignored; a '#' later in a line is not a comment.
#pragma once

#include <cstddef>
#include <string_view>

namespace yoke::formats::edge_list_syntax {

// The fields of a line, and their names as error messages show them.
inline constexpr std::size_t kFields = 3;
inline constexpr std::string_view kFieldNames = "U V W";

// As the first non-blank character: the line is a comment.
inline constexpr char kComment = '#';

}  // namespace yoke::formats::edge_list_syntax
