#include "run_yoke.h"

#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <fstream>
#include <sstream>
#include <stdexcept>

namespace yoke::cli::testing {
namespace {

// Single quotes keep every byte literal in sh; a quote inside becomes '\''.
std::string shell_quoted(const std::string& text) {
  std::string out = "'";
  for (const char c : text) {
    if (c == '\'') {
      out += "'\\''";
    } else {
      out += c;
    }
  }
  return out + "'";
}

}  // namespace

RunResult run_yoke(const TempDir& dir, const std::vector<std::string>& args,
                   const std::string& stdin_text) {
  std::string command = shell_quoted(YOKE_BINARY);
  for (const std::string& arg : args) {
    command += ' ';
    command += shell_quoted(arg);
  }
  command += " <";
  command += shell_quoted(dir.write(".stdin", stdin_text));
  command += " >";
  command += shell_quoted(dir.file(".stdout"));
  command += " 2>";
  command += shell_quoted(dir.file(".stderr"));

  // sh reports a yoke killed by a signal as exit status 128 + signal; treat that as a crash.
  const int status = std::system(command.c_str());
  RunResult result;
  if (status != -1 && WIFEXITED(status) && WEXITSTATUS(status) < 128) {
    result.exit_code = WEXITSTATUS(status);
  }
  result.out = dir.read(".stdout");
  result.err = dir.read(".stderr");
  return result;
}

}  // namespace yoke::cli::testing
