#include "file_io.h"

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <memory>

#include "cli_error.h"

namespace yoke::cli {
namespace {

struct FileCloser {
  void operator()(std::FILE* file) const { std::fclose(file); }
};

std::string read_stream(std::FILE* file, const std::string& path) {
  std::string text;
  // Reading in large blocks keeps a 10^6-edge graph (tens of MB) to a few hundred reads.
  constexpr std::size_t kBlock = std::size_t{1} << 20;
  std::size_t used = 0;
  for (;;) {
    text.resize(used + kBlock);
    const std::size_t got = std::fread(text.data() + used, 1, kBlock, file);
    used += got;
    if (got < kBlock) break;
  }
  text.resize(used);
  if (std::ferror(file)) {
    throw CliError("cannot read " + display_name(path) + ": " + std::strerror(errno));
  }
  return text;
}

}  // namespace

std::string display_name(const std::string& path) { return path == "-" ? "<stdin>" : path; }

std::string read_whole_input(const std::string& path) {
  if (path == "-") return read_stream(stdin, path);
  std::unique_ptr<std::FILE, FileCloser> file(std::fopen(path.c_str(), "rb"));
  if (!file) throw CliError("cannot open " + path + ": " + std::strerror(errno));
  return read_stream(file.get(), path);
}

std::ofstream open_output_file(const std::string& path) {
  std::ofstream out(path, std::ios::binary | std::ios::trunc);
  if (!out) throw CliError("cannot write " + path + ": " + std::strerror(errno));
  return out;
}

void close_output_file(std::ofstream& out, const std::string& path) {
  out.close();
  if (!out) throw CliError("cannot write " + path + " (write failed)");
}

}  // namespace yoke::cli
