// Reading a journal in position order, every record checked on the way (FORMAT.md). Read only:
// a Reader never changes the files, so it can look at the journal of a running daemon.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace yoke::journal {

// One record as read. The payload stays valid until the reader's next call to next().
struct Record {
  std::uint64_t position = 0;
  std::string_view payload;
};

// A damaged tail of the last segment: what recovery cuts.
struct TailCut {
  std::filesystem::path segment;
  std::uint64_t offset = 0;  // first byte not kept; 0 when the whole file goes (torn header)
  std::uint64_t bytes = 0;   // from offset to the end of the file
  std::string reason;
};

class Reader {
 public:
  // Reads the records with position > after_position, in order. Throws Error when the journal
  // starts after after_position + 1 (the records in between were dropped) or cannot be listed.
  Reader(const std::filesystem::path& dir, std::uint64_t after_position);
  // Reads every record the journal holds.
  static Reader from_start(const std::filesystem::path& dir);

  Reader(Reader&&) noexcept;
  Reader& operator=(Reader&&) noexcept;
  Reader(const Reader&) = delete;
  Reader& operator=(const Reader&) = delete;
  ~Reader();

  // The next record; nullopt at the end of the journal, or at damage in the last segment (then
  // tail() says where). Throws Corruption for damage anywhere else, after returning the
  // records before it. Segments holding only records <= after_position are not read at all; the
  // rest costs O(bytes read).
  std::optional<Record> next();

  // Set once next() has stopped at a damaged tail.
  const std::optional<TailCut>& tail() const;
  // The position after the last good record read so far (records skipped because they
  // are <= after_position count as read); 0 until a segment has been opened.
  std::uint64_t next_position() const;
  // The first positions of the segments in the directory when the reader started.
  const std::vector<std::uint64_t>& segments() const;

 private:
  struct State;
  explicit Reader(std::unique_ptr<State> state);
  std::unique_ptr<State> state_;
};

}  // namespace yoke::journal
