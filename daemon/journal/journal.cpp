#include "journal.h"

#include <fcntl.h>

#include <limits>

#include "journal_state.h"
#include "segment_names.h"

namespace yoke::journal {

Journal::State::~State() {
  if (failed || !writer.is_open()) return;
  try {
    writer.flush();
  } catch (...) {
    // A destructor cannot report it; only synced records were promised.
  }
}

void Journal::State::check_usable() const {
  if (failed) {
    throw Error("journal: " + dir.string() +
                " is unusable after a failed write or sync; reopen it to recover");
  }
}

void Journal::State::mark_durable_end() {
  durable_segments = segments.size();
  durable_bytes = writer.is_open() ? writer.size() : 0;
  durable_next_position = next_position;
}

void Journal::State::cut_back_to_durable_end() noexcept {
  try {
    writer = SegmentWriter();  // closes the file; the buffered bytes are dropped
    const bool removing = segments.size() > durable_segments;
    while (segments.size() > durable_segments) {
      remove_file(segment_path(dir, segments.back()));
      segments.pop_back();
    }
    if (!segments.empty()) {
      const std::filesystem::path last = segment_path(dir, segments.back());
      const FileDescriptor file = open_file(last, O_WRONLY);
      if (file_size(file, last) > durable_bytes) {
        truncate_file(file, durable_bytes, last);
        sync_data(file, last);
      }
    }
    if (removing) sync_directory(dir_fd, dir);
    next_position = durable_next_position;
  } catch (...) {
    // The disk refuses even this: recovery keeps what of the records reached it.
  }
}

void Journal::State::start_segment(std::uint64_t first_position) {
  writer = SegmentWriter::create(segment_path(dir, first_position), first_position);
  segments.push_back(first_position);
  directory_unsynced = true;
}

void Journal::State::sync() {
  if (!writer.is_open()) return;
  if (options.durability == Durability::none) {
    writer.flush();
    return;
  }
  writer.sync();
  if (directory_unsynced) {
    sync_directory(dir_fd, dir);
    directory_unsynced = false;
  }
}

Journal::Journal(Journal&&) noexcept = default;
Journal& Journal::operator=(Journal&&) noexcept = default;
Journal::~Journal() = default;

const std::filesystem::path& Journal::directory() const { return state_->dir; }
const Recovery& Journal::recovery() const { return state_->recovery; }
std::uint64_t Journal::first_position() const {
  return state_->segments.empty() ? 0 : state_->segments.front();
}
std::uint64_t Journal::next_position() const { return state_->next_position; }

void Journal::append(std::uint64_t position, std::string_view payload) {
  append(position, PayloadPieces(&payload, 1));
}

void Journal::append(std::uint64_t position, PayloadPieces pieces) {
  State& s = *state_;
  s.check_usable();
  std::uint64_t size = 0;
  for (const std::string_view piece : pieces) size += piece.size();
  if (size > s.options.max_record_bytes) {
    throw Error("journal: record " + std::to_string(position) + " of " +
                std::to_string(size) + " bytes exceeds the maximum record size of " +
                std::to_string(s.options.max_record_bytes) + " bytes");
  }
  if (position == 0 || position == std::numeric_limits<std::uint64_t>::max()) {
    throw Error("journal: position " + std::to_string(position) + " is out of range");
  }
  if (s.next_position != 0 && position != s.next_position) {
    throw Error("journal: append of position " + std::to_string(position) + ", expected " +
                std::to_string(s.next_position));
  }
  s.guarded([&] {
    const std::uint64_t bytes = format::kRecordHeaderBytes + size;
    if (!s.writer.is_open()) {
      s.start_segment(position);
    } else if (s.writer.holds_records() && s.writer.size() + bytes > s.options.segment_bytes) {
      // Under every policy: only the last segment may ever be torn (FORMAT.md).
      s.writer.sync();
      s.start_segment(position);
    }
    s.writer.add(position, pieces);
    s.next_position = position + 1;
    if (s.options.durability == Durability::every_batch) {
      s.sync();
      s.mark_durable_end();
    }
  });
}

void Journal::sync() {
  State& s = *state_;
  s.check_usable();
  s.guarded([&] {
    s.sync();
    s.mark_durable_end();
  });
}

Reader Journal::read_after(std::uint64_t after_position) {
  State& s = *state_;
  if (!s.failed && s.writer.is_open()) s.guarded([&] { s.writer.flush(); });
  return Reader(s.dir, after_position);
}

std::size_t Journal::drop_before(std::uint64_t position) {
  State& s = *state_;
  std::size_t dropped = 0;
  // Segment i holds segments[i] .. segments[i+1] - 1; the last one is never dropped.
  while (s.segments.size() >= 2 && s.segments[1] <= position) {
    remove_file(segment_path(s.dir, s.segments.front()));
    s.segments.erase(s.segments.begin());
    if (s.durable_segments > 0) --s.durable_segments;
    ++dropped;
  }
  if (dropped > 0) sync_directory(s.dir_fd, s.dir);
  return dropped;
}

}  // namespace yoke::journal
