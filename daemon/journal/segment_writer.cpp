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
  add(position, PayloadPieces(&payload, 1));
}

void SegmentWriter::add(std::uint64_t position, PayloadPieces pieces) {
  std::size_t size = 0;
  for (const std::string_view piece : pieces) size += piece.size();
  append_record_header(buffer_, position, pieces);
  if (size < kFlushBufferBytes) {
    for (const std::string_view piece : pieces) buffer_.append(piece);
    if (buffer_.size() >= kFlushBufferBytes) flush();
    return;
  }
  // A big record (a new pool's base graph): copied into the buffer, it cost a copy and the
  // buffer's growth while every pool's next acknowledgements waited for this commit.
  flush();
  for (const std::string_view piece : pieces) {
    write_all(file_, piece, path_);
    written_ += piece.size();
  }
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
