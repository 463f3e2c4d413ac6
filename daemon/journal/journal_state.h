// The insides of a Journal, shared by journal_open.cpp (recovery) and journal.cpp (appending).
#pragma once

#include <cstdint>
#include <filesystem>
#include <vector>

#include "journal.h"
#include "posix_file.h"
#include "segment_writer.h"

namespace yoke::journal {

struct Journal::State {
  std::filesystem::path dir;
  Options options;
  FileDescriptor dir_fd;                // holds the directory lock; fsync'ed for new entries
  std::vector<std::uint64_t> segments;  // first positions, ascending; the last is open
  SegmentWriter writer;                 // the last segment
  std::uint64_t next_position = 0;      // 0: no segment yet, any first position goes
  bool directory_unsynced = false;      // a segment created since the last directory fsync
  bool failed = false;                  // a write or sync failed: see journal.h
  Recovery recovery;
  // The end last reported durable, where a failure cuts back to: how many segments there
  // were, the last one's size, and the next position then.
  std::size_t durable_segments = 0;
  std::uint64_t durable_bytes = 0;
  std::uint64_t durable_next_position = 0;

  State() = default;
  State(const State&) = delete;
  State& operator=(const State&) = delete;
  // Best effort: unsynced records go to the OS, so a clean exit loses nothing appended.
  ~State();

  void check_usable() const;
  // Runs an I/O step; if it throws, the journal is marked failed and cut back to its durable
  // end (best effort).
  template <typename Step>
  void guarded(Step step) {
    try {
      step();
    } catch (...) {
      failed = true;
      cut_back_to_durable_end();
      throw;
    }
  }
  // What a caller may now rely on as durable: the current end.
  void mark_durable_end();
  // After a failure: drops the buffer, removes the segments created since the durable end and
  // truncates the last one kept to its durable size. Never throws: a cut that fails leaves
  // the records for recovery to find.
  void cut_back_to_durable_end() noexcept;
  // Removes a damaged tail found by recovery: the bytes from the cut on, or the whole file when
  // its header was torn. Durable before any record is written after it.
  void cut_tail(const TailCut& cut);
  void start_segment(std::uint64_t first_position);
  void sync();
};

}  // namespace yoke::journal
