#include "tools/nats_cluster/server_version.h"

#include <cstdio>

namespace yoke::nats_cluster {

std::string server_version(const std::string& program) {
  std::string text = "unknown";
  const std::string command = program + " --version 2>&1";
  if (FILE* pipe = ::popen(command.c_str(), "r")) {
    char buffer[128] = {};
    if (std::fgets(buffer, sizeof buffer, pipe) != nullptr) {
      text = buffer;
      text.erase(text.find_last_not_of("\r\n") + 1);
    }
    ::pclose(pipe);
  }
  return text;
}

}  // namespace yoke::nats_cluster
