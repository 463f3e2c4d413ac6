// Journal::open: find the journal's end, cut a torn tail, resume appending after it.
#include <fcntl.h>

#include <algorithm>
#include <string>

#include "journal_state.h"
#include "segment_names.h"

namespace yoke::journal {
namespace {

// Writes the segment's bytes again, in place, and syncs them. The process before may have
// stopped after a failed fdatasync whose cut failed too: the kernel then keeps those bytes in
// its cache (the scan just read them) but marked clean, never to be written back, and a sync
// now would return 0 without writing them. Only bytes written again are dirty again. O(segment).
void write_back_again(const std::filesystem::path& segment) {
  constexpr std::size_t kPiece = std::size_t{1} << 20;
  FileDescriptor source = open_file(segment, O_RDONLY);
  std::uint64_t left = file_size(source, segment);
  BufferedReader reader(std::move(source), segment);
  const FileDescriptor target = open_file(segment, O_WRONLY);
  std::string piece;
  while (left > 0) {
    piece.resize(static_cast<std::size_t>(std::min<std::uint64_t>(left, kPiece)));
    reader.read(piece.data(), piece.size());
    write_all(target, piece, segment);
    left -= piece.size();
  }
  sync_data(target, segment);
}

}  // namespace

void Journal::State::cut_tail(const TailCut& cut) {
  if (cut.offset == 0) {
    remove_file(cut.segment);
    segments.pop_back();
    sync_directory(dir_fd, dir);
    return;
  }
  const FileDescriptor file = open_file(cut.segment, O_WRONLY);
  truncate_file(file, cut.offset, cut.segment);
  sync_data(file, cut.segment);
}

Journal::Journal(std::unique_ptr<State> state) : state_(std::move(state)) {}

Journal Journal::open(const std::filesystem::path& dir, const Options& options) {
  if (options.max_record_bytes > format::kMaxPayloadBytes) {
    throw Error("journal: max_record_bytes " + std::to_string(options.max_record_bytes) +
                " exceeds the format limit of " + std::to_string(format::kMaxPayloadBytes));
  }
  auto state = std::make_unique<State>();
  state->dir = dir;
  state->options = options;
  create_directories_durably(dir);
  state->dir_fd = open_directory(dir);
  const std::chrono::milliseconds waited =
      lock_directory(state->dir_fd, dir, std::chrono::milliseconds(options.lock_wait_ms));

  Reader scan = Reader::from_start(dir);
  std::uint64_t records = 0;
  while (scan.next()) ++records;
  state->segments = scan.segments();
  if (scan.tail()) state->cut_tail(*scan.tail());

  state->next_position = state->segments.empty() ? 0 : scan.next_position();
  if (!state->segments.empty()) {
    // Every segment before the last was synced before the next one started.
    write_back_again(segment_path(dir, state->segments.back()));
    state->writer = SegmentWriter::reopen(segment_path(dir, state->segments.back()));
  }
  state->recovery = Recovery{state->segments.size(), records, scan.tail(),
                             static_cast<std::uint64_t>(waited.count())};
  state->mark_durable_end();
  return Journal(std::move(state));
}

}  // namespace yoke::journal
