// A FileSystem (daemon/journal/file_system.h) for tests of failing disks: it passes every call
// to the system, counts them, fails the N-th (EIO unless told another errno; a failed write
// leaves half its bytes in the file, as a write cut short by the disk would, except under EINTR,
// which writes nothing), and can "crash": forget everything that was not made durable, as a
// power loss would. What it forgets:
//   - bytes of a file past its size at its last successful fdatasync (a file it saw opened
//     for writing before counts as durable at its size then);
//   - bytes whose write-back failed (a failed fdatasync: those since the last good one; a failed
//     write-back: its range), even after a later fdatasync returned 0: the kernel marks such
//     pages clean and reports the error once, so a retry proves nothing. They read back as
//     written until the crash, which zeroes them; writing them again makes them ordinary;
//   - directory entries (files and directories created, renamed or removed) since the last
//     successful fsync of their directory: a created file or directory disappears (with all it
//     holds), a rename is undone (the replaced file comes back), a removed file comes back with
//     the bytes it had.
// Syncs are modelled, not passed on (the crash is this class's, and tests stay fast). Stat and
// locks are not counted. One thread. Install it with ScopedFileSystem.
#pragma once

#include <cerrno>
#include <cstdint>
#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "daemon/journal/file_system.h"

namespace yoke::journal::testing {

class FaultyFileSystem final : public FileSystem {
 public:
  // Fails the n-th counted call from now on (1 = the next), and with `persistent` every call
  // after it too (a disk that has gone). 0: no failure.
  void fail_at(std::uint64_t n, bool persistent = false);
  // The errno of the failed calls from now on (EIO until told otherwise).
  void fail_with(int error) { error_ = error; }
  // Every write from now on writes at most `bytes` and returns that many, without an error
  // (write(2) may; 0: whole writes). Not a failure: failed() stays false.
  void shorten_writes(std::size_t bytes) { write_limit_ = bytes; }
  // Counted calls so far (open, write, read, write_back, sync_data, sync_directory, truncate,
  // rename, remove, make_directory).
  std::uint64_t calls() const { return calls_; }
  // Whether a call has been failed.
  bool failed() const { return failures_ > 0; }
  // "kind path" of every counted call, in order (to name an injection point in a message).
  const std::vector<std::string>& trace() const { return trace_; }

  // Forgets what was not durable (see above), then stops failing calls and forgets the
  // descriptors: everything on disk now counts as durable. Call it with every descriptor
  // closed (the objects that held them destroyed), as after a process died.
  void crash();

  int open(const std::filesystem::path& path, int flags, unsigned mode) override;
  ssize_t write(int fd, const void* bytes, std::size_t n) override;
  ssize_t read(int fd, void* bytes, std::size_t n) override;
  int write_back(int fd, off_t offset, off_t n) override;
  int sync_data(int fd) override;
  int sync_directory(int fd) override;
  int truncate(int fd, off_t size) override;
  int rename(const std::filesystem::path& from, const std::filesystem::path& to) override;
  int remove(const std::filesystem::path& path) override;
  int make_directory(const std::filesystem::path& path, unsigned mode) override;

 private:
  // A directory change not yet made durable, and how to undo it.
  struct EntryChange {
    enum class Kind { created, renamed, removed } kind;
    std::string directory;
    std::string path;                     // created, removed: the file; renamed: the new name
    std::string from;                     // renamed: the old name
    std::optional<std::string> previous;  // the bytes of the file the change replaced or removed
  };

  // Byte ranges [first, second) of a file.
  using Ranges = std::vector<std::pair<std::uint64_t, std::uint64_t>>;

  // Counts a call; true when it is to fail (errno is set then).
  bool count(const char* kind, const std::string& path);
  std::string path_of(int fd) const;
  // The bytes a crash would leave of a file: its durable prefix.
  std::optional<std::string> durable_bytes(const std::string& path) const;
  // A failed write-back of [first, last) of the file: what of it was not durable is lost.
  void lose_write_back(const std::string& path, std::uint64_t first, std::uint64_t last);

  std::uint64_t calls_ = 0;
  std::uint64_t fail_at_ = 0;
  bool persistent_ = false;
  std::uint64_t failures_ = 0;
  int error_ = EIO;
  std::size_t write_limit_ = 0;
  std::vector<std::string> trace_;
  std::map<int, std::string> paths_;              // open descriptors
  std::map<std::string, std::uint64_t> durable_;  // size durable, by file
  std::map<std::string, Ranges> lost_;            // bytes a crash zeroes, by file
  std::vector<EntryChange> changes_;              // in the order made
};

}  // namespace yoke::journal::testing
