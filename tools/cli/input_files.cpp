#include "input_files.h"

#include "cli_error.h"
#include "file_io.h"

namespace yoke::cli {
namespace {

// Reads `path` whole and parses it with `parse`; a bad line becomes "FILE:LINE: problem".
template <class Parse>
auto parse_input_file(const std::string& path, Parse parse) {
  const std::string text = read_whole_input(path);
  try {
    return parse(text);
  } catch (const formats::LineError& error) {
    throw CliError(display_name(path) + ":" + std::to_string(error.line()) + ": " +
                   error.problem());
  }
}

}  // namespace

formats::EdgeList load_edge_list(const std::string& path) {
  return parse_input_file(path, formats::parse_edge_list);
}

formats::EventScript load_event_script(const std::string& path) {
  return parse_input_file(path, formats::parse_event_script);
}

}  // namespace yoke::cli
