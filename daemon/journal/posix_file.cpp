#include "posix_file.h"

#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cstring>
#include <thread>
#include <utility>

#include "file_system.h"
#include "journal_error.h"

namespace yoke::journal {
namespace {

constexpr std::size_t kReadBufferBytes = std::size_t{1} << 20;

[[noreturn]] void fail(const char* what, const std::filesystem::path& path) {
  const int error = errno;
  throw Error(std::string("journal: ") + what + " " + path.string() + " failed: " +
              std::strerror(error));
}

}  // namespace

FileDescriptor& FileDescriptor::operator=(FileDescriptor&& other) noexcept {
  if (this != &other) {
    if (fd_ >= 0) ::close(fd_);
    fd_ = other.release();
  }
  return *this;
}

FileDescriptor::~FileDescriptor() {
  if (fd_ >= 0) ::close(fd_);
}

int FileDescriptor::release() { return std::exchange(fd_, -1); }

FileDescriptor open_file(const std::filesystem::path& path, int flags, unsigned mode) {
  int fd;
  do {
    fd = file_system().open(path, flags | O_CLOEXEC, mode);
  } while (fd < 0 && errno == EINTR);
  if (fd < 0) fail("open of", path);
  return FileDescriptor(fd);
}

FileDescriptor open_directory(const std::filesystem::path& dir) {
  return open_file(dir, O_RDONLY | O_DIRECTORY);
}

namespace {

std::filesystem::path without_trailing_slash(const std::filesystem::path& dir) {
  std::filesystem::path clean = dir.lexically_normal();
  if (!clean.has_filename() && clean.has_parent_path() && clean != clean.root_path()) {
    clean = clean.parent_path();  // "a/b/" -> "a/b"
  }
  return clean;
}

std::filesystem::path parent_of(const std::filesystem::path& clean) {
  return clean.has_parent_path() ? clean.parent_path() : std::filesystem::path(".");
}

// Creates clean (and its parents) unless it is there.
void make_missing(const std::filesystem::path& clean) {
  std::error_code error;
  if (std::filesystem::is_directory(clean, error)) return;
  const std::filesystem::path parent = parent_of(clean);
  make_missing(parent);
  if (file_system().make_directory(clean, 0755) != 0 && errno != EEXIST) {
    fail("creation of directory", clean);
  }
  sync_directory(open_directory(parent), parent);
}

}  // namespace

void create_directories_durably(const std::filesystem::path& dir) {
  make_missing(without_trailing_slash(dir));
}

std::chrono::milliseconds lock_directory(const FileDescriptor& dir,
                                         const std::filesystem::path& path,
                                         std::chrono::milliseconds wait) {
  // A process killed a moment ago still holds the lock until the kernel has torn it down.
  constexpr std::chrono::milliseconds kPoll{20};
  const auto start = std::chrono::steady_clock::now();
  for (;;) {
    if (::flock(dir.get(), LOCK_EX | LOCK_NB) == 0) {
      return std::chrono::duration_cast<std::chrono::milliseconds>(
          std::chrono::steady_clock::now() - start);
    }
    if (errno == EINTR) continue;
    if (errno != EWOULDBLOCK) fail("lock of", path);
    if (std::chrono::steady_clock::now() - start >= wait) {
      throw Error("journal: " + path.string() +
                  " is already open (in this or another process)" +
                  (wait.count() > 0 ? " after waiting " + std::to_string(wait.count()) + " ms"
                                    : std::string()));
    }
    std::this_thread::sleep_for(kPoll);
  }
}

std::uint64_t file_size(const FileDescriptor& file, const std::filesystem::path& path) {
  struct stat status {};
  if (::fstat(file.get(), &status) != 0) fail("stat of", path);
  return static_cast<std::uint64_t>(status.st_size);
}

void write_all(const FileDescriptor& file, std::string_view bytes,
               const std::filesystem::path& path) {
  while (!bytes.empty()) {
    const ssize_t written = file_system().write(file.get(), bytes.data(), bytes.size());
    if (written < 0) {
      if (errno == EINTR) continue;
      fail("write to", path);
    }
    bytes.remove_prefix(static_cast<std::size_t>(written));
  }
}

std::uint64_t write_paced(const FileDescriptor& file, std::string_view bytes, std::uint64_t offset,
                          std::size_t piece, const std::filesystem::path& path) {
  while (!bytes.empty()) {
    // Up to the file's next piece boundary, so that small writes (a snapshot's frames) share
    // their piece's write-back instead of asking for one each.
    const std::string_view next = bytes.substr(0, piece - offset % piece);
    write_all(file, next, path);
    offset += next.size();
    bytes.remove_prefix(next.size());
    if (offset % piece == 0) {
      // Its error is the piece's failed write-back, which the file's fdatasync would then no
      // longer report (the descriptor's error mark has moved past it): the file fails here.
      if (file_system().write_back(file.get(), static_cast<off_t>(offset - piece),
                                   static_cast<off_t>(piece)) != 0) {
        fail("write-back of", path);
      }
    }
  }
  return offset;
}

void sync_data(const FileDescriptor& file, const std::filesystem::path& path) {
  if (file_system().sync_data(file.get()) != 0) fail("fdatasync of", path);
}

void sync_directory(const FileDescriptor& dir, const std::filesystem::path& path) {
  if (file_system().sync_directory(dir.get()) != 0) fail("fsync of directory", path);
}

void truncate_file(const FileDescriptor& file, std::uint64_t size,
                   const std::filesystem::path& path) {
  if (file_system().truncate(file.get(), static_cast<off_t>(size)) != 0) {
    fail("truncate of", path);
  }
}

void rename_file(const std::filesystem::path& from, const std::filesystem::path& to) {
  if (file_system().rename(from, to) == 0) return;
  const int error = errno;
  throw Error("journal: rename of " + from.string() + " to " + to.string() +
              " failed: " + std::strerror(error));
}

void remove_file(const std::filesystem::path& path) {
  if (file_system().remove(path) != 0) fail("removal of", path);
}

BufferedReader::BufferedReader(FileDescriptor file, std::filesystem::path path)
    : file_(std::move(file)), path_(std::move(path)) {}

void BufferedReader::read(char* out, std::size_t n) {
  while (n > 0) {
    if (begin_ == end_) {
      // A large read goes straight to the caller's memory; small ones refill the buffer.
      if (n >= kReadBufferBytes) {
        const ssize_t got = file_system().read(file_.get(), out, n);
        if (got < 0 && errno == EINTR) continue;
        if (got < 0) fail("read of", path_);
        if (got == 0) throw Error("journal: " + path_.string() + " ended while being read");
        out += got;
        n -= static_cast<std::size_t>(got);
        continue;
      }
      if (buffer_.empty()) buffer_.resize(kReadBufferBytes);
      const ssize_t got = file_system().read(file_.get(), buffer_.data(), buffer_.size());
      if (got < 0 && errno == EINTR) continue;
      if (got < 0) fail("read of", path_);
      if (got == 0) throw Error("journal: " + path_.string() + " ended while being read");
      begin_ = 0;
      end_ = static_cast<std::size_t>(got);
    }
    const std::size_t take = std::min(n, end_ - begin_);
    std::memcpy(out, buffer_.data() + begin_, take);
    begin_ += take;
    out += take;
    n -= take;
  }
}

}  // namespace yoke::journal
