// How the postmortem library reports a replay that cannot go on: a source that cannot be read,
// a commit the pool refuses, a log that breaks its seq rule. The message names the source (a
// script's FILE:LINE, a log and its pool and seq). The CLI prints it as its other errors.
#pragma once

#include <stdexcept>

namespace yoke::postmortem {

class ReplayError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace yoke::postmortem
