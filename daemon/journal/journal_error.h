// What the journal throws.
#pragma once

#include <cstdint>
#include <filesystem>
#include <stdexcept>
#include <string>

namespace yoke::journal {

// Misuse (a position out of order, a record over the size limit), a failed system call,
// or a journal that cannot be opened. The message says which file and why.
class Error : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// Damage that recovery must not cut: anywhere but the tail of the last segment, or a segment
// header that is not a torn write. Names the segment file and the byte offset in it.
class Corruption : public Error {
 public:
  Corruption(std::filesystem::path segment, std::uint64_t offset, const std::string& reason);

  const std::filesystem::path& segment() const { return segment_; }
  std::uint64_t offset() const { return offset_; }

 private:
  std::filesystem::path segment_;
  std::uint64_t offset_;
};

}  // namespace yoke::journal
