// A config file or flag the daemon cannot start with. The message names the file, line and
// key when there is one.
#pragma once

#include <stdexcept>

namespace yoke::daemon {

class ConfigError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace yoke::daemon
