#include "segment_writer.h"

#include <fcntl.h>

#include "journal_format.h"
#include "record_codec.h"

namespace yoke::journal {
namespace {

// Past this, add() writes the buffer out: memory stays bounded between syncs.
constexpr std::size_t kFlushBufferBytes = std::size_t{1} << 20;

}  // namespace

SegmentWriter SegmentWriter::create(const std::filesystem::path& file,
                                    std::uint64_t first_position) {
  SegmentWriter writer;
  writer.file_ = open_file(file, O_WRONLY | O_CREAT | O_EXCL | O_APPEND);
  writer.path_ = file;
  append_segment_header(writer.buffer_, first_position);
  return writer;
}

SegmentWriter SegmentWriter::reopen(const std::filesystem::path& file) {
  SegmentWriter writer;
  writer.file_ = open_file(file, O_WRONLY | O_APPEND);
  writer.path_ = file;
  writer.written_ = file_size(writer.file_, file);
  return writer;
}

bool SegmentWriter::holds_records() const { return size() > format::kSegmentHeaderBytes; }

void SegmentWriter::add(std::uint64_t position, std::string_view payload) {
  append_record(buffer_, position, payload);
  if (buffer_.size() >= kFlushBufferBytes) flush();
}

void SegmentWriter::flush() {
  if (buffer_.empty()) return;
  write_all(file_, buffer_, path_);
  written_ += buffer_.size();
  buffer_.clear();
  // One huge record should not keep its buffer for the life of the segment.
  if (buffer_.capacity() > 4 * kFlushBufferBytes) buffer_.shrink_to_fit();
}

void SegmentWriter::sync() {
  flush();
  sync_data(file_, path_);
}

}  // namespace yoke::journal
