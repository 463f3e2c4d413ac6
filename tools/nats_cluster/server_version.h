#pragma once
// The version line of the nats-server the local clusters run, for benchmark headers (a number
// is only comparable with one measured on the same server version).

#include <string>

namespace yoke::nats_cluster {

// Runs `PROGRAM --version` (looked up in PATH) and returns its first line, or "unknown" when it
// cannot be run. Costs one child process.
std::string server_version(const std::string& program = "nats-server");

}  // namespace yoke::nats_cluster
