// yoked's flags:
//   yoked --data-dir DIR [--config FILE] [--ingest EP] [--publish EP] [--query EP]
//         [--metrics HOST:PORT] [--log-format text|json]
#pragma once

#include <optional>
#include <string>

#include "config_overrides.h"

namespace yoke::daemon {

struct CommandLine {
  ConfigOverrides overrides;
  // Set when yoked must stop now with this status: 0 after --help, non-zero for a bad flag.
  std::optional<int> exit_code;
  std::string message;  // what to print then (help on stdout, an error on stderr)
};

// argv[0] is the program name. Never throws for bad flags: they come back in exit_code.
CommandLine parse_command_line(int argc, const char* const* argv);

}  // namespace yoke::daemon
