// A fresh directory under the system temp directory, removed with everything in it on
// destruction: the one the CLI, journal, storage and daemon tests share. Header-only, so that
// every test target that names it needs no library.
#pragma once

#include <stdlib.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <stdexcept>
#include <string>
#include <string_view>
#include <system_error>

namespace yoke::test_support {

class TempDir {
 public:
  // `label` names the directory (yoke-LABEL-XXXXXX), to tell whose it is when one is left over.
  explicit TempDir(std::string_view label = "test") {
    std::string pattern =
        (std::filesystem::temp_directory_path() / ("yoke-" + std::string(label) + "-XXXXXX")).string();
    if (::mkdtemp(pattern.data()) == nullptr) throw std::runtime_error("mkdtemp failed");
    path_ = pattern;
  }
  ~TempDir() {
    std::error_code ignored;
    std::filesystem::remove_all(path_, ignored);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;

  const std::filesystem::path& path() const { return path_; }
  std::filesystem::path operator/(const std::string& name) const { return path_ / name; }
  std::string file(const std::string& name) const { return (path_ / name).string(); }

  // Writes `content` to path()/name and returns the full path.
  std::string write(const std::string& name, const std::string& content) const {
    const std::string full = file(name);
    std::ofstream(full, std::ios::binary) << content;
    return full;
  }
  // The whole of path()/name (empty when it cannot be read).
  std::string read(const std::string& name) const {
    std::ifstream in(file(name), std::ios::binary);
    std::ostringstream text;
    text << in.rdbuf();
    return text.str();
  }

 private:
  std::filesystem::path path_;
};

}  // namespace yoke::test_support
