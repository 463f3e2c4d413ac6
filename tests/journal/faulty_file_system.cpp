#include "faulty_file_system.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstdint>
#include <fstream>
#include <iterator>
#include <stdexcept>

namespace yoke::journal::testing {
namespace {

std::string clean(const std::filesystem::path& path) {
  std::filesystem::path normal = path.lexically_normal();
  if (!normal.has_filename()) normal = normal.parent_path();
  return normal.string();
}

std::string parent_of(const std::string& path) {
  return std::filesystem::path(path).parent_path().string();
}

std::optional<std::uint64_t> size_of(const std::string& path) {
  struct stat status {};
  if (::stat(path.c_str(), &status) != 0) return std::nullopt;
  return static_cast<std::uint64_t>(status.st_size);
}

std::string slurp(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

void put(const std::string& path, const std::string& bytes) {
  std::ofstream out(path, std::ios::binary | std::ios::trunc);
  out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
  if (!out) throw std::runtime_error("faulty file system: cannot restore " + path);
}

// Takes [first, last) out of `ranges`.
void subtract(std::vector<std::pair<std::uint64_t, std::uint64_t>>& ranges, std::uint64_t first,
              std::uint64_t last) {
  std::vector<std::pair<std::uint64_t, std::uint64_t>> left;
  for (const auto& [begin, end] : ranges) {
    if (begin < std::min(end, first)) left.emplace_back(begin, std::min(end, first));
    if (std::max(begin, last) < end) left.emplace_back(std::max(begin, last), end);
  }
  ranges = std::move(left);
}

}  // namespace

void FaultyFileSystem::fail_at(std::uint64_t n, bool persistent) {
  fail_at_ = n == 0 ? 0 : calls_ + n;
  persistent_ = persistent;
}

bool FaultyFileSystem::count(const char* kind, const std::string& path) {
  ++calls_;
  trace_.push_back(std::string(kind) + " " + path);
  const bool fail = fail_at_ != 0 && (calls_ == fail_at_ || (persistent_ && calls_ > fail_at_));
  if (fail) {
    ++failures_;
    errno = error_;
  }
  return fail;
}

std::string FaultyFileSystem::path_of(int fd) const {
  const auto found = paths_.find(fd);
  return found == paths_.end() ? std::string() : found->second;
}

std::optional<std::string> FaultyFileSystem::durable_bytes(const std::string& path) const {
  if (!size_of(path)) return std::nullopt;
  std::string bytes = slurp(path);
  const auto durable = durable_.find(path);
  if (durable != durable_.end() && bytes.size() > durable->second) bytes.resize(durable->second);
  return bytes;
}

int FaultyFileSystem::open(const std::filesystem::path& raw, int flags, unsigned mode) {
  const std::string path = clean(raw);
  if (count("open", path)) return -1;
  const bool existed = size_of(path).has_value();
  const int fd = ::open(path.c_str(), flags, static_cast<mode_t>(mode));
  if (fd < 0) return fd;
  paths_[fd] = path;
  const bool writing = (flags & (O_WRONLY | O_RDWR)) != 0;
  if (!existed && (flags & O_CREAT) != 0) {
    changes_.push_back({EntryChange::Kind::created, parent_of(path), path, {}, std::nullopt});
    durable_[path] = 0;
    lost_.erase(path);
  } else if (writing && (flags & O_TRUNC) != 0) {
    durable_[path] = 0;
    lost_.erase(path);
  } else if (writing && !durable_.contains(path)) {
    durable_[path] = *size_of(path);
  }
  return fd;
}

ssize_t FaultyFileSystem::write(int fd, const void* bytes, std::size_t n) {
  const std::string path = path_of(fd);
  if (count("write", path)) {
    // The disk took part of it: torn bytes in the file, and an error. An interrupted write
    // wrote nothing (it would have returned the count otherwise).
    const int error = errno;
    if (n > 1 && error != EINTR) (void)::write(fd, bytes, n / 2);
    errno = error;
    return -1;
  }
  const std::size_t take = write_limit_ > 0 ? std::min(n, write_limit_) : n;
  const ssize_t written = ::write(fd, bytes, take);
  if (written > 0) {
    // Bytes written again are dirty again: a later sync writes them back.
    const auto lost = lost_.find(path);
    if (lost != lost_.end()) {
      const off_t end = ::lseek(fd, 0, SEEK_CUR);
      if (end >= written) {
        subtract(lost->second, static_cast<std::uint64_t>(end - written),
                 static_cast<std::uint64_t>(end));
      }
    }
  }
  return written;
}

ssize_t FaultyFileSystem::read(int fd, void* bytes, std::size_t n) {
  if (count("read", path_of(fd))) return -1;
  return ::read(fd, bytes, n);
}

void FaultyFileSystem::lose_write_back(const std::string& path, std::uint64_t first,
                                       std::uint64_t last) {
  const auto size = size_of(path);
  const auto durable = durable_.find(path);
  const std::uint64_t from = std::max(first, durable == durable_.end() ? 0 : durable->second);
  const std::uint64_t to = std::min(last, size.value_or(0));
  if (from < to) lost_[path].emplace_back(from, to);
}

int FaultyFileSystem::write_back(int fd, off_t offset, off_t n) {
  const std::string path = path_of(fd);
  if (count("write-back", path)) {
    const int error = errno;
    lose_write_back(path, static_cast<std::uint64_t>(offset),
                    static_cast<std::uint64_t>(offset + n));
    errno = error;
    return -1;
  }
  return 0;  // a hint: nothing becomes durable (crash() models only fdatasync)
}

int FaultyFileSystem::sync_data(int fd) {
  const std::string path = path_of(fd);
  if (count("sync", path)) {
    const int error = errno;
    lose_write_back(path, 0, UINT64_MAX);
    errno = error;
    return -1;
  }
  // Durability is this class's model (crash()): no real fdatasync needed.
  struct stat status {};
  if (::fstat(fd, &status) != 0) return -1;
  durable_[path] = static_cast<std::uint64_t>(status.st_size);
  return 0;
}

int FaultyFileSystem::sync_directory(int fd) {
  const std::string directory = path_of(fd);
  if (count("sync-directory", directory)) return -1;
  std::erase_if(changes_, [&](const EntryChange& change) { return change.directory == directory; });
  return 0;
}

int FaultyFileSystem::truncate(int fd, off_t size) {
  const std::string path = path_of(fd);
  if (count("truncate", path)) return -1;
  const int result = ::ftruncate(fd, size);
  if (result == 0) {
    std::uint64_t& durable = durable_[path];
    durable = std::min(durable, static_cast<std::uint64_t>(size));
    if (const auto lost = lost_.find(path); lost != lost_.end()) {
      subtract(lost->second, static_cast<std::uint64_t>(size), UINT64_MAX);
    }
  }
  return result;
}

int FaultyFileSystem::rename(const std::filesystem::path& raw_from,
                             const std::filesystem::path& raw_to) {
  const std::string from = clean(raw_from);
  const std::string to = clean(raw_to);
  if (count("rename", from)) return -1;
  std::optional<std::string> replaced = durable_bytes(to);
  if (::rename(from.c_str(), to.c_str()) != 0) return -1;
  if (const auto durable = durable_.find(from); durable != durable_.end()) {
    durable_[to] = durable->second;
    durable_.erase(durable);
  } else {
    durable_.erase(to);
  }
  lost_.erase(to);
  if (const auto lost = lost_.find(from); lost != lost_.end()) {
    lost_[to] = std::move(lost->second);
    lost_.erase(from);
  }
  changes_.push_back({EntryChange::Kind::renamed, parent_of(to), to, from, std::move(replaced)});
  return 0;
}

int FaultyFileSystem::remove(const std::filesystem::path& raw) {
  const std::string path = clean(raw);
  if (count("remove", path)) return -1;
  std::optional<std::string> bytes = durable_bytes(path);
  if (::unlink(path.c_str()) != 0) return -1;
  durable_.erase(path);
  lost_.erase(path);
  changes_.push_back({EntryChange::Kind::removed, parent_of(path), path, {}, std::move(bytes)});
  return 0;
}

int FaultyFileSystem::make_directory(const std::filesystem::path& raw, unsigned mode) {
  const std::string path = clean(raw);
  if (count("mkdir", path)) return -1;
  if (::mkdir(path.c_str(), static_cast<mode_t>(mode)) != 0) return -1;
  changes_.push_back({EntryChange::Kind::created, parent_of(path), path, {}, std::nullopt});
  return 0;
}

void FaultyFileSystem::crash() {
  // Files first lose their unsynced bytes, under the names they have now...
  for (const auto& [path, durable] : durable_) {
    const auto size = size_of(path);
    if (size && *size > durable) std::filesystem::resize_file(path, durable);
  }
  // ...and the bytes whose write-back failed read back as zeroes...
  for (const auto& [path, ranges] : lost_) {
    const auto size = size_of(path);
    if (!size) continue;
    const int fd = ::open(path.c_str(), O_WRONLY | O_CLOEXEC);
    if (fd < 0) throw std::runtime_error("faulty file system: cannot reopen " + path);
    for (const auto& [first, last] : ranges) {
      if (first >= *size) continue;
      const std::string zeroes(std::min(last, *size) - first, '\0');
      if (::pwrite(fd, zeroes.data(), zeroes.size(), static_cast<off_t>(first)) !=
          static_cast<ssize_t>(zeroes.size())) {
        ::close(fd);
        throw std::runtime_error("faulty file system: cannot zero " + path);
      }
    }
    ::close(fd);
  }
  // ...then the directory changes are undone, newest first.
  for (auto change = changes_.rbegin(); change != changes_.rend(); ++change) {
    switch (change->kind) {
      case EntryChange::Kind::created:
        std::filesystem::remove_all(change->path);
        break;
      case EntryChange::Kind::renamed:
        if (size_of(change->path)) std::filesystem::rename(change->path, change->from);
        if (change->previous) put(change->path, *change->previous);
        break;
      case EntryChange::Kind::removed:
        if (change->previous) put(change->path, *change->previous);
        break;
    }
  }
  changes_.clear();
  durable_.clear();
  lost_.clear();
  paths_.clear();
  fail_at_ = 0;
  persistent_ = false;
  error_ = EIO;
  write_limit_ = 0;
}

}  // namespace yoke::journal::testing
