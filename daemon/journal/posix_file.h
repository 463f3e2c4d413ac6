// The few POSIX file calls the journal needs (fdatasync and directory fsync have no standard
// C++ form), wrapped so that every failure becomes an Error naming the file and the cause. The
// calls that change files go through file_system() (file_system.h), where tests inject faults.
#pragma once

#include <chrono>
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>

namespace yoke::journal {

// Owns one file descriptor and closes it. Not copyable.
class FileDescriptor {
 public:
  FileDescriptor() = default;
  explicit FileDescriptor(int fd) : fd_(fd) {}
  FileDescriptor(FileDescriptor&& other) noexcept : fd_(other.release()) {}
  FileDescriptor& operator=(FileDescriptor&& other) noexcept;
  FileDescriptor(const FileDescriptor&) = delete;
  FileDescriptor& operator=(const FileDescriptor&) = delete;
  ~FileDescriptor();

  int get() const { return fd_; }
  bool is_open() const { return fd_ >= 0; }
  int release();

 private:
  int fd_ = -1;
};

// open(2) with O_CLOEXEC added; throws Error on failure.
FileDescriptor open_file(const std::filesystem::path& path, int flags, unsigned mode = 0644);
// The directory, opened for fsync and locking.
FileDescriptor open_directory(const std::filesystem::path& dir);
// Creates dir and its missing parents, each new entry made durable by an fsync of its parent:
// files made durable inside it are then reachable after a power loss. A dir already there is
// left as it is (no call). Throws Error.
void create_directories_durably(const std::filesystem::path& dir);
// Takes an exclusive lock on the open directory for the life of the descriptor, waiting up to
// `wait` (polling every 20 ms) while another process or open Journal holds it; throws Error
// (saying "already open") when it is still held then. Returns how long it waited.
std::chrono::milliseconds lock_directory(const FileDescriptor& dir,
                                         const std::filesystem::path& path,
                                         std::chrono::milliseconds wait = {});

std::uint64_t file_size(const FileDescriptor& file, const std::filesystem::path& path);
// Writes every byte (retrying short writes and EINTR) or throws.
void write_all(const FileDescriptor& file, std::string_view bytes,
               const std::filesystem::path& path);
// write_all of `bytes` at the file's end `offset`, cut at the file's multiples of `piece`, each
// whole piece written back to the device (sync_file_range) before the next is written (the
// last, partial one is left to sync_data), however small the calls that fill it: a big file then
// never fills the device's queue, where another file's fdatasync (the journal's) would wait
// behind all of it. A hint about when, not a promise that: nothing is durable until
// sync_data(). But a piece's failed write-back throws here: the kernel reports a file's
// write-back error once per descriptor, so the sync_data() after it would return 0 over bytes
// that never reached the disk. Returns the offset after `bytes`.
std::uint64_t write_paced(const FileDescriptor& file, std::string_view bytes, std::uint64_t offset,
                          std::size_t piece, const std::filesystem::path& path);
// fdatasync: the file's data and the metadata needed to read it (its size) are on disk.
void sync_data(const FileDescriptor& file, const std::filesystem::path& path);
// fsync of a directory: entries created, renamed or removed in it are on disk.
void sync_directory(const FileDescriptor& dir, const std::filesystem::path& path);
void truncate_file(const FileDescriptor& file, std::uint64_t size,
                   const std::filesystem::path& path);
// rename(2): replaces `to` if it exists. Durable after sync_directory of the directory.
void rename_file(const std::filesystem::path& from, const std::filesystem::path& to);
// unlink(2) of a file. Durable after sync_directory of its directory.
void remove_file(const std::filesystem::path& path);

// Reads a file front to back through a buffer: few system calls for many small records.
class BufferedReader {
 public:
  BufferedReader(FileDescriptor file, std::filesystem::path path);
  // Copies the next n bytes to out; throws Error if the file ends first (the caller checks
  // lengths against the size, so that means the file shrank while being read).
  void read(char* out, std::size_t n);

 private:
  FileDescriptor file_;
  std::filesystem::path path_;
  std::string buffer_;
  std::size_t begin_ = 0;  // unread bytes are buffer_[begin_, end_)
  std::size_t end_ = 0;
};

}  // namespace yoke::journal
