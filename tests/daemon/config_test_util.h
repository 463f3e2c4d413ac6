// Helpers of the config tests: read TOML text over the defaults, expect a ConfigError.
#pragma once

#include <gtest/gtest.h>

#include <string>

#include "daemon/config/config_error.h"
#include "daemon/config/config_file.h"

namespace yoke::daemon::testing {

inline DaemonConfig read_text(const std::string& text) {
  DaemonConfig config;
  read_config_text(text, "t.toml", config);
  return config;
}

// The message of the ConfigError that reading `text` throws ("" when it throws none).
inline std::string read_error(const std::string& text) {
  try {
    read_text(text);
  } catch (const ConfigError& error) {
    return error.what();
  }
  return "";
}

}  // namespace yoke::daemon::testing
