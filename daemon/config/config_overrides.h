// Settings given on the command line. They win over the config file.
#pragma once

#include <filesystem>
#include <optional>
#include <string>

#include "daemon_config.h"

namespace yoke::daemon {

struct ConfigOverrides {
  std::optional<std::filesystem::path> data_dir;
  std::optional<std::filesystem::path> config_file;  // where to read the file, if any
  std::optional<std::string> ingest;
  std::optional<std::string> publish;
  std::optional<std::string> query;
  std::optional<std::string> metrics;
  std::optional<LogFormat> log_format;
};

void apply_overrides(const ConfigOverrides& overrides, DaemonConfig& config);

// The daemon's config: embedded defaults, then the config file if one is named, then the
// flags; validated as a whole. Throws ConfigError.
DaemonConfig load_config(const ConfigOverrides& overrides);

}  // namespace yoke::daemon
