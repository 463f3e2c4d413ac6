#include "file_system.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cstdio>

namespace yoke::journal {
namespace {

class PosixFileSystem final : public FileSystem {
 public:
  int open(const std::filesystem::path& path, int flags, unsigned mode) override {
    return ::open(path.c_str(), flags, static_cast<mode_t>(mode));
  }
  ssize_t write(int fd, const void* bytes, std::size_t n) override {
    return ::write(fd, bytes, n);
  }
  ssize_t read(int fd, void* bytes, std::size_t n) override { return ::read(fd, bytes, n); }
  int write_back(int fd, off_t offset, off_t n) override {
    return ::sync_file_range(fd, offset, n, SYNC_FILE_RANGE_WRITE | SYNC_FILE_RANGE_WAIT_AFTER);
  }
  int sync_data(int fd) override { return ::fdatasync(fd); }
  int sync_directory(int fd) override { return ::fsync(fd); }
  int truncate(int fd, off_t size) override { return ::ftruncate(fd, size); }
  int rename(const std::filesystem::path& from, const std::filesystem::path& to) override {
    return std::rename(from.c_str(), to.c_str());
  }
  int remove(const std::filesystem::path& path) override { return ::unlink(path.c_str()); }
  int make_directory(const std::filesystem::path& path, unsigned mode) override {
    return ::mkdir(path.c_str(), static_cast<mode_t>(mode));
  }
};

FileSystem* current_file_system = nullptr;  // nullptr: the POSIX one

}  // namespace

FileSystem& posix_file_system() {
  static PosixFileSystem files;
  return files;
}

FileSystem& file_system() {
  return current_file_system != nullptr ? *current_file_system : posix_file_system();
}

ScopedFileSystem::ScopedFileSystem(FileSystem& files) : previous_(current_file_system) {
  current_file_system = &files;
}

ScopedFileSystem::~ScopedFileSystem() { current_file_system = previous_; }

}  // namespace yoke::journal
