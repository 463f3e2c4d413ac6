// Runs the built `yoke` binary the way a user would, for the end-to-end tests.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

namespace yoke::cli::testing {

// A fresh directory under the system temp dir, removed with everything in it on destruction.
class TempDir {
 public:
  TempDir();
  ~TempDir();
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;

  const std::filesystem::path& path() const { return path_; }
  // Writes `content` to path()/name and returns the full path.
  std::string write(const std::string& name, const std::string& content) const;
  std::string read(const std::string& name) const;
  std::string file(const std::string& name) const { return (path_ / name).string(); }

 private:
  std::filesystem::path path_;
};

struct RunResult {
  int exit_code = -1;  // -1 if yoke did not exit normally
  std::string out;
  std::string err;
};

// Runs `yoke args...` with stdin from `stdin_text`; stdout and stderr are captured through
// files in `dir`.
RunResult run_yoke(const TempDir& dir, const std::vector<std::string>& args,
                   const std::string& stdin_text = "");

}  // namespace yoke::cli::testing
