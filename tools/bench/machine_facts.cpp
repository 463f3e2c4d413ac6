#include "tools/bench/machine_facts.h"

#include <sched.h>
#include <stdio.h>
#include <unistd.h>

#include <fstream>

#ifndef YOKE_BENCH_SOURCE_DIR
#define YOKE_BENCH_SOURCE_DIR "."
#endif

namespace yoke::bench {
namespace {

// Everything `command` writes to stdout, or nothing when it cannot be run or fails.
std::string output_of(const std::string& command) {
  FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return "";
  std::string text;
  char chunk[256];
  for (std::size_t got; (got = fread(chunk, 1, sizeof chunk, pipe)) > 0;) text.append(chunk, got);
  if (pclose(pipe) != 0) return "";
  return text;
}

std::string shell_quoted(const std::string& text) {
  std::string quoted = "'";
  for (char c : text) quoted += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return quoted + "'";
}

}  // namespace

long usable_cpus() {
  cpu_set_t set;
  if (sched_getaffinity(0, sizeof set, &set) == 0) return CPU_COUNT(&set);
  return sysconf(_SC_NPROCESSORS_ONLN);
}

std::string cpu_model() {
  std::ifstream in("/proc/cpuinfo");
  for (std::string line; std::getline(in, line);) {
    if (line.rfind("model name", 0) != 0) continue;
    const auto colon = line.find(':');
    if (colon == std::string::npos) continue;
    const auto start = line.find_first_not_of(' ', colon + 1);
    return start == std::string::npos ? "unknown" : line.substr(start);
  }
  return "unknown";
}

std::string load_average() {
  std::ifstream in("/proc/loadavg");
  std::string one, five, fifteen;
  if (!(in >> one >> five >> fifteen)) return "unknown";
  return one + " " + five + " " + fifteen;
}

std::string source_commit() {
  // --no-optional-locks: `status` would otherwise refresh the index file, a write.
  const std::string git = "git --no-optional-locks -C " + shell_quoted(YOKE_BENCH_SOURCE_DIR);
  std::string commit = output_of(git + " rev-parse --short HEAD 2>/dev/null");
  while (!commit.empty() && (commit.back() == '\n' || commit.back() == ' ')) commit.pop_back();
  if (commit.empty()) return "unknown";
  const std::string changes =
      output_of(git + " status --porcelain 2>/dev/null");
  return changes.empty() ? commit : commit + " + uncommitted changes";
}

}  // namespace yoke::bench
