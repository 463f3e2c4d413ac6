// The segment being appended to: records collect in a buffer in front of the file, so many
// small appends cost one write(2) at the next flush.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>

#include "posix_file.h"
#include "record_codec.h"

namespace yoke::journal {

class SegmentWriter {
 public:
  SegmentWriter() = default;  // no segment
  // Creates the segment file for first_position (it must not exist); its header is buffered and
  // reaches the file with the first record.
  static SegmentWriter create(const std::filesystem::path& file, std::uint64_t first_position);
  // Continues an existing segment whose bytes have all been checked.
  static SegmentWriter reopen(const std::filesystem::path& file);

  bool is_open() const { return file_.is_open(); }
  // Bytes in the file plus bytes buffered.
  std::uint64_t size() const { return written_ + buffer_.size(); }
  bool holds_records() const;

  // Buffers one record; writes the buffer out when it grows large. Amortised O(payload).
  void add(std::uint64_t position, std::string_view payload);
  // The same for the payload `pieces` make; a record of 1 MiB or more is written from its
  // pieces (after the buffer) instead of being copied into the buffer. O(payload).
  void add(std::uint64_t position, PayloadPieces pieces);
  // Hands the buffered bytes to the OS: safe from a process crash, not yet from power loss.
  void flush();
  // flush(), then fdatasync: the bytes are on disk.
  void sync();

 private:
  FileDescriptor file_;
  std::filesystem::path path_;
  std::string buffer_;
  std::uint64_t written_ = 0;
};

}  // namespace yoke::journal
