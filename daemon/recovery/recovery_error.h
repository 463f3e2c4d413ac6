// The error of a log that cannot be replayed, shared by the daemon's recovery and the
// postmortem replay (`yoke replay DATA_DIR`).
#pragma once

#include <stdexcept>

namespace yoke::daemon {

// The log cannot be replayed: a record does not apply, a sequence number is missing, or no
// usable snapshot covers the records the log has dropped. The daemon must not start; a replay
// stops there.
class RecoveryError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace yoke::daemon
