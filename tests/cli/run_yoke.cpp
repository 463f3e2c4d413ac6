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

TempDir::TempDir() {
  std::string pattern = (std::filesystem::temp_directory_path() / "yoke-cli-test-XXXXXX").string();
  if (mkdtemp(pattern.data()) == nullptr) throw std::runtime_error("mkdtemp failed");
  path_ = pattern;
}

TempDir::~TempDir() {
  std::error_code ignored;
  std::filesystem::remove_all(path_, ignored);
}

std::string TempDir::write(const std::string& name, const std::string& content) const {
  const std::string full = file(name);
  std::ofstream(full, std::ios::binary) << content;
  return full;
}

std::string TempDir::read(const std::string& name) const {
  std::ifstream in(file(name), std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

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
