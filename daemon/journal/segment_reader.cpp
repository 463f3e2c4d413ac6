#include "segment_reader.h"

#include <fcntl.h>

#include <algorithm>
#include <utility>

#include "journal_format.h"
#include "record_codec.h"

namespace yoke::journal {

using namespace format;

SegmentReader::SegmentReader(const std::filesystem::path& file, std::uint64_t first_position)
    : file_(file), expected_position_(first_position) {
  FileDescriptor fd = open_file(file_, O_RDONLY);
  size_ = journal::file_size(fd, file_);
  input_.emplace(std::move(fd), file_);

  header_.resize(static_cast<std::size_t>(std::min<std::uint64_t>(size_, kSegmentHeaderBytes)));
  input_->read(header_.data(), header_.size());
  const HeaderCheck check = check_segment_header(header_);
  if (check.verdict == HeaderCheck::Verdict::torn) {
    set_damage(Damage::Kind::torn_header, 0, check.reason);
  } else if (check.verdict != HeaderCheck::Verdict::ok) {
    set_damage(Damage::Kind::bad_header, 0, check.reason);
  } else if (check.first_position != first_position) {
    set_damage(Damage::Kind::bad_header, kHeaderFirstPositionOffset,
               "header says the first position is " + std::to_string(check.first_position) +
                   ", the file name says " + std::to_string(first_position));
  }
  offset_ = kSegmentHeaderBytes;
}

std::optional<Record> SegmentReader::next() {
  if (damage_ || offset_ == size_) return std::nullopt;
  const std::uint64_t left = size_ - offset_;
  if (left < kRecordHeaderBytes) {
    set_damage(Damage::Kind::bad_record, offset_,
               "record header cut short (" + std::to_string(left) + " of " +
                   std::to_string(kRecordHeaderBytes) + " bytes)");
    return std::nullopt;
  }
  header_.resize(kRecordHeaderBytes);
  input_->read(header_.data(), header_.size());
  const RecordHeader header = decode_record_header(header_);
  if (header.length > kMaxPayloadBytes) {
    set_damage(Damage::Kind::bad_record, offset_,
               "record length " + std::to_string(header.length) + " exceeds the format limit");
    return std::nullopt;
  }
  if (header.length > left - kRecordHeaderBytes) {
    set_damage(Damage::Kind::bad_record, offset_,
               "record of " + std::to_string(header.length) + " bytes cut short (" +
                   std::to_string(left - kRecordHeaderBytes) + " bytes left in the file)");
    return std::nullopt;
  }
  payload_.resize(header.length);
  input_->read(payload_.data(), payload_.size());
  if (header.checksum != record_checksum(header_, payload_)) {
    set_damage(Damage::Kind::bad_record, offset_, "record checksum mismatch");
    return std::nullopt;
  }
  if (header.position != expected_position_) {
    set_damage(Damage::Kind::bad_record, offset_,
               "record has position " + std::to_string(header.position) + ", expected " +
                   std::to_string(expected_position_));
    return std::nullopt;
  }
  offset_ += kRecordHeaderBytes + header.length;
  ++expected_position_;
  return Record{header.position, payload_};
}

void SegmentReader::set_damage(Damage::Kind kind, std::uint64_t offset, std::string reason) {
  damage_ = Damage{kind, offset, std::move(reason)};
}

}  // namespace yoke::journal
