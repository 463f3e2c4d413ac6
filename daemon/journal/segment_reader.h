// One segment file read front to back: its header, then each record checked in turn. It
// reports damage rather than throwing: whether damage is a torn tail or an error depends on
// where the segment sits in the journal, which the caller knows.
#pragma once

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>

#include "journal_reader.h"
#include "posix_file.h"

namespace yoke::journal {

struct Damage {
  enum class Kind {
    torn_header,  // header cut short or zeroed: the file was being created
    bad_header,   // wrong magic, version, checksum or first position
    bad_record,   // a record cut short, or failing its length, checksum or position check
  };
  Kind kind = Kind::bad_record;
  std::uint64_t offset = 0;
  std::string reason;
};

class SegmentReader {
 public:
  // Opens the segment file and checks its header against first_position (from its name). Throws
  // Error only when a system call fails.
  SegmentReader(const std::filesystem::path& file, std::uint64_t first_position);

  // The next good record (payload valid until the next call); nullopt at the end of the file
  // or at damage (then damage() is set and every later call returns nullopt).
  std::optional<Record> next();

  const std::optional<Damage>& damage() const { return damage_; }
  const std::filesystem::path& file() const { return file_; }
  std::uint64_t file_size() const { return size_; }
  // The position the next record must carry.
  std::uint64_t expected_position() const { return expected_position_; }

 private:
  void set_damage(Damage::Kind kind, std::uint64_t offset, std::string reason);

  std::filesystem::path file_;
  std::uint64_t size_ = 0;
  std::uint64_t offset_ = 0;  // start of the next record
  std::uint64_t expected_position_;
  std::optional<BufferedReader> input_;
  std::string header_;
  std::string payload_;
  std::optional<Damage> damage_;
};

}  // namespace yoke::journal
