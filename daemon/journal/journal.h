// The journal: an append-only log of opaque records, numbered by consecutive positions,
// in a directory of checksummed segment files (FORMAT.md). The daemon appends one record per
// batch, syncs once per group commit, acknowledges after sync() returns, and after a crash
// replays the records after its newest snapshot.
//
// One Journal owns its directory (an exclusive lock, held until it is destroyed). Not
// thread-safe: one thread appends and syncs. After a failed write or sync it refuses further
// appends and syncs (the kernel may have dropped the unsynced bytes), and first cuts what was
// appended since the last point it reported durable (the last sync(), or under every_batch the
// last append()), so that a reopen finds exactly what was reported durable; when that cut fails
// too, recovery keeps whatever of those records reached the disk.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string_view>

#include "journal_error.h"
#include "journal_format.h"
#include "journal_reader.h"
#include "record_codec.h"

namespace yoke::journal {

// When appended records reach the disk.
enum class Durability {
  every_batch,  // append() returns once its record is on disk
  group,        // sync() puts everything appended so far on disk (once per group commit)
  none,         // sync() hands records to the OS: they survive the process, not a power loss
                // (a full segment is still synced before the next one starts)
};

struct Options {
  Durability durability = Durability::group;
  // A new segment starts before a record that would take a segment holding records past this.
  std::uint64_t segment_bytes = std::uint64_t{64} << 20;
  // Longest payload append() accepts; at most format::kMaxPayloadBytes.
  std::uint32_t max_record_bytes = std::uint32_t{16} << 20;
  // How long open() waits for the directory's lock while another holder has it (a process
  // killed a moment ago keeps it until the kernel has torn the process down). 0: fail at once.
  std::uint64_t lock_wait_ms = 0;
};

// What open() found.
struct Recovery {
  std::size_t segments = 0;       // segment files kept
  std::uint64_t records = 0;      // records checked and kept
  std::optional<TailCut> cut;     // the damaged tail removed from the last segment, if any
  std::uint64_t lock_waited_ms = 0;  // how long open() waited for the directory's lock
};

class Journal {
 public:
  // Opens the journal in dir, creating the directory if needed. Reads and checks every record
  // once (O(journal size)); cuts a damaged tail of the last segment (truncating the file, or
  // removing it if its header was torn) and reports it in recovery(); then writes the last
  // segment again in place and syncs it (O(segment): bytes a failed sync left clean in the OS's
  // cache would otherwise never reach the disk, FORMAT.md). Throws Corruption for
  // damage anywhere else (the caller must not start: records after it would be lost), and
  // Error when the directory is still locked after Options::lock_wait_ms or a system call
  // fails.
  static Journal open(const std::filesystem::path& dir, const Options& options = {});

  Journal(Journal&&) noexcept;
  Journal& operator=(Journal&&) noexcept;
  Journal(const Journal&) = delete;
  Journal& operator=(const Journal&) = delete;
  // Hands unsynced records to the OS (best effort, no fsync, never throws), then unlocks.
  ~Journal();

  const std::filesystem::path& directory() const;
  const Recovery& recovery() const;
  // The journal holds records first_position() .. next_position() - 1; both are 0 while it
  // holds no segment, and then the first append may carry any position >= 1.
  std::uint64_t first_position() const;
  std::uint64_t next_position() const;

  // Appends a record at `position`, which must be next_position() (or any position >= 1 for
  // an empty journal). Throws Error, changing nothing, for a wrong position or a payload longer
  // than max_record_bytes. Buffered: durable after the next sync() (at once under every_batch).
  // Starts a new segment when the current one is full, first making the full one durable.
  // Amortised O(payload).
  void append(std::uint64_t position, std::string_view payload);
  // The same for the payload `pieces` make together (record_codec.h), not joined first.
  void append(std::uint64_t position, PayloadPieces pieces);

  // Makes every record appended so far durable (see Durability); returns when it is. O(bytes
  // since the last sync) plus one fdatasync.
  void sync();

  // Reads the records with position > after_position, including those appended but not yet
  // synced.
  // The reader sees the records appended before this call.
  Reader read_after(std::uint64_t after_position);

  // Deletes the segments whose records all have a position below `position` (after a snapshot
  // at position - 1 or later), oldest first; never the segment being appended to. Returns how
  // many it deleted.
  // O(segments deleted).
  std::size_t drop_before(std::uint64_t position);

 private:
  struct State;
  explicit Journal(std::unique_ptr<State> state);
  std::unique_ptr<State> state_;
};

}  // namespace yoke::journal
