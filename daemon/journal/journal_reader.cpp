#include "journal_reader.h"

#include <utility>

#include "journal_error.h"
#include "segment_names.h"
#include "segment_reader.h"

namespace yoke::journal {

struct Reader::State {
  std::filesystem::path dir;
  std::uint64_t after_position = 0;
  std::vector<std::uint64_t> segments;
  std::size_t index = 0;  // segment being read, or to open next
  std::optional<SegmentReader> current;
  std::uint64_t next_position = 0;
  std::optional<TailCut> tail;
  bool done = false;

  bool is_last(std::size_t i) const { return i + 1 == segments.size(); }
  // Opens segments[index]; false when the reading ends there (a torn last header).
  bool open_segment();
  // Damage in segments[index]: a tail to cut in the last segment, an error elsewhere.
  void stop_at(const Damage& damage);
};

Reader::Reader(std::unique_ptr<State> state) : state_(std::move(state)) {}

Reader::Reader(const std::filesystem::path& dir, std::uint64_t after_position)
    : state_(std::make_unique<State>()) {
  State& s = *state_;
  s.dir = dir;
  s.after_position = after_position;
  s.segments = list_segments(dir);
  if (s.segments.empty()) {
    s.done = true;
    return;
  }
  if (after_position < s.segments.front() - 1) {
    throw Error("journal: " + dir.string() + " starts at position " +
                std::to_string(s.segments.front()) + ": records after " +
                std::to_string(after_position) + " are missing");
  }
  // Segment i holds positions segments[i] .. segments[i+1]-1: skip those ending at or below
  // after_position.
  while (s.index + 1 < s.segments.size() && s.segments[s.index + 1] <= after_position + 1) {
    ++s.index;
  }
}

Reader Reader::from_start(const std::filesystem::path& dir) {
  const std::vector<std::uint64_t> segments = list_segments(dir);
  return Reader(dir, segments.empty() ? 0 : segments.front() - 1);
}

Reader::Reader(Reader&&) noexcept = default;
Reader& Reader::operator=(Reader&&) noexcept = default;
Reader::~Reader() = default;

bool Reader::State::open_segment() {
  const std::uint64_t first = segments[index];
  current.emplace(segment_path(dir, first), first);
  if (current->damage()) {
    stop_at(*current->damage());
    return false;
  }
  // Past the first segment read, each must begin right after the one before.
  if (next_position != 0 && first != next_position) {
    throw Corruption(current->file(), 0,
                     "position gap: the segment starts at " + std::to_string(first) +
                         " but the previous segment ends at " + std::to_string(next_position - 1));
  }
  next_position = first;
  return true;
}

void Reader::State::stop_at(const Damage& damage) {
  const bool cuttable = is_last(index) && damage.kind != Damage::Kind::bad_header;
  if (!cuttable) throw Corruption(current->file(), damage.offset, damage.reason);
  tail = TailCut{current->file(), damage.offset, current->file_size() - damage.offset,
                 damage.reason};
  done = true;
}

std::optional<Record> Reader::next() {
  State& s = *state_;
  while (!s.done) {
    if (!s.current && !s.open_segment()) break;
    if (auto record = s.current->next()) {
      s.next_position = record->position + 1;
      if (record->position > s.after_position) return record;
      continue;
    }
    if (s.current->damage()) {
      s.stop_at(*s.current->damage());
      break;
    }
    s.current.reset();
    if (++s.index == s.segments.size()) s.done = true;
  }
  return std::nullopt;
}

const std::optional<TailCut>& Reader::tail() const { return state_->tail; }
std::uint64_t Reader::next_position() const { return state_->next_position; }
const std::vector<std::uint64_t>& Reader::segments() const { return state_->segments; }

}  // namespace yoke::journal
