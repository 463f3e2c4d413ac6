// The seam under every file the daemon keeps (the journal's segments, the snapshot files, their
// directories): the system calls that read or change files or make them durable. Production uses
// the POSIX one; tests install one that fails a chosen call or forgets what was not synced
// (tests/journal/faulty_file_system.h). Stat and locks go to the system directly.
//
// Each call has its system call's contract: the result, and errno set on failure (-1). One
// virtual call per system call costs nothing next to the system call itself.
#pragma once

#include <sys/types.h>

#include <cstddef>
#include <filesystem>

namespace yoke::journal {

class FileSystem {
 public:
  virtual ~FileSystem() = default;

  virtual int open(const std::filesystem::path& path, int flags, unsigned mode) = 0;  // open(2)
  virtual ssize_t write(int fd, const void* bytes, std::size_t n) = 0;                // write(2)
  virtual ssize_t read(int fd, void* bytes, std::size_t n) = 0;                       // read(2)
  // sync_file_range(2) with SYNC_FILE_RANGE_WRITE | SYNC_FILE_RANGE_WAIT_AFTER: writes the range
  // back and waits. Its error is the file's write-back error, reported here and then no longer
  // by a later fdatasync of the same descriptor (the kernel advances the descriptor's mark).
  virtual int write_back(int fd, off_t offset, off_t n) = 0;
  virtual int sync_data(int fd) = 0;                         // fdatasync(2) of a file
  virtual int sync_directory(int fd) = 0;                    // fsync(2) of a directory
  virtual int truncate(int fd, off_t size) = 0;              // ftruncate(2)
  virtual int rename(const std::filesystem::path& from, const std::filesystem::path& to) = 0;
  virtual int remove(const std::filesystem::path& path) = 0;  // unlink(2)
  virtual int make_directory(const std::filesystem::path& path, unsigned mode) = 0;  // mkdir(2)
};

// The system's calls, unchanged.
FileSystem& posix_file_system();

// The file system every file call of the journal and the snapshots goes through: the POSIX
// one unless a test installed another. O(1).
FileSystem& file_system();

// Installs `files` for its lifetime (tests), then puts back the one before. Only while no
// journal or snapshot I/O runs on another thread.
class ScopedFileSystem {
 public:
  explicit ScopedFileSystem(FileSystem& files);
  ~ScopedFileSystem();
  ScopedFileSystem(const ScopedFileSystem&) = delete;
  ScopedFileSystem& operator=(const ScopedFileSystem&) = delete;

 private:
  FileSystem* previous_;
};

}  // namespace yoke::journal
