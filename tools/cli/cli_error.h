// How the yoke command line reports failure: one exception type for everything a user can fix,
// and the exit codes each command documents in `yoke --help`.
#pragma once

#include <stdexcept>

namespace yoke::cli {

enum ExitCode : int {
  kExitOk = 0,
  kExitCertificateRejected = 1,  // verify: the certificate does not prove the matching optimal
  kExitError = 2,                // bad usage, unreadable or malformed input, out-of-range weights
  kExitNoPerfectMatching = 3,    // solve --mode perfect: the graph has no perfect matching
  kExitUnavailable = 4,          // send, query, watch: the daemon did not answer in time
};

// A failure caused by the input or the invocation; main() prints "error: <what>" and exits
// with kExitError. The message already names the file (and line) it is about.
class CliError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// The daemon did not answer in time (it may be down, or the endpoint wrong); main() prints
// "error: <what>" and exits with kExitUnavailable. The message names the endpoint.
class UnavailableError : public CliError {
 public:
  using CliError::CliError;
};

}  // namespace yoke::cli
