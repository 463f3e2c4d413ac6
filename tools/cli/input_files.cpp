#include "input_files.h"

#include "cli_error.h"
#include "file_io.h"

namespace yoke::cli {

formats::EdgeList load_edge_list(const std::string& path) {
  const std::string text = read_whole_input(path);
  try {
    return formats::parse_edge_list(text);
  } catch (const formats::EdgeListError& error) {
    throw CliError(display_name(path) + ":" + std::to_string(error.line()) + ": " +
                   error.problem());
  }
}

formats::EventScript load_event_script(const std::string& path) {
  const std::string text = read_whole_input(path);
  try {
    return formats::parse_event_script(text);
  } catch (const formats::EventScriptError& error) {
    throw CliError(display_name(path) + ":" + std::to_string(error.line()) + ": " +
                   error.problem());
  }
}

}  // namespace yoke::cli
