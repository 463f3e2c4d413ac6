// Reading a TOML config file over a DaemonConfig (settings the file leaves out keep their
// value). Checks each key's name, type and range; the whole is checked by validate_config().
#pragma once

#include <filesystem>
#include <string>
#include <string_view>

#include "daemon_config.h"

namespace yoke::daemon {

// Throws ConfigError naming the file, line and key.
void read_config_file(const std::filesystem::path& file, DaemonConfig& config);
// The same for text already in memory; `source` names it in messages.
void read_config_text(std::string_view text, const std::string& source, DaemonConfig& config);

}  // namespace yoke::daemon
