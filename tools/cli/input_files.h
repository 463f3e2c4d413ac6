// The command line's text inputs read from files: an edge list (`yoke solve`, `yoke verify`)
// and an event script (`yoke replay`, `yoke send`). The formats themselves, their readers and
// writers, are in tools/formats/ (docs/formats.md); this file adds the file and the error that
// names it.
#pragma once

#include <string>

#include "tools/formats/edge_list_reader.h"
#include "tools/formats/event_script_reader.h"

namespace yoke::cli {

// Reads `path` ("-" for stdin) whole and parses it as an edge list. Throws CliError
// "FILE:LINE: problem".
formats::EdgeList load_edge_list(const std::string& path);

// Reads `path` ("-" for stdin) whole and parses it as an event script. Throws CliError
// "FILE:LINE: problem".
formats::EventScript load_event_script(const std::string& path);

}  // namespace yoke::cli
