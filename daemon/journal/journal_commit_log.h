// The local backend of the commit log (daemon/storage/commit_log.h): a journal directory of
// segment files (FORMAT.md, unchanged). Positions are the journal's record positions; every
// group of a window has the position of the window's first record (its window_start), and
// the records are stored in the order the batches were accepted.
//
// Errors of the journal are rethrown as storage errors with the same message: Corruption as
// storage::LogDamage, Error as storage::LogError.
#pragma once

#include <filesystem>
#include <functional>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/storage/commit_log.h"
#include "journal.h"

namespace yoke::journal {

// A journal directory, read only: no lock, nothing cut or written, so it can read the journal
// of a running daemon (`yoke replay DATA_DIR`). A damaged tail of the last segment ends the
// reading (GroupReader::stopped_early says where); damage anywhere else is LogDamage.
class JournalView : public storage::CommitLogView {
 public:
  // Nothing is read until asked; a directory that cannot be listed is a LogError then.
  explicit JournalView(std::filesystem::path dir);

  std::string describe() const override;
  // The first position of the oldest segment file (a directory listing), 0 when there is none.
  storage::Position first_position(std::string_view pool = {}) const override;
  std::unique_ptr<storage::GroupReader> read_from(storage::Position from,
                                                  std::string_view pool = {}) override;

 private:
  std::filesystem::path dir_;
};

// The journal as the daemon's commit log: owns the Journal (its lock), appends a window's
// records and syncs once per commit() under the journal's Durability.
class JournalCommitLog : public storage::CommitLog {
 public:
  // Journal::open: creates the directory if needed, checks every record, cuts a torn tail of
  // the last segment (recovery() says what was cut). Throws storage::LogDamage for damage
  // elsewhere, storage::LogError when the directory is locked by another process or a system
  // call fails.
  static std::unique_ptr<JournalCommitLog> open(const std::filesystem::path& dir,
                                                const Options& options = {});
  explicit JournalCommitLog(Journal journal);

  // What opening the journal found (the tail cut, if any).
  const Recovery& recovery() const { return journal_.recovery(); }

  std::string describe() const override;
  storage::Position first_position(std::string_view pool = {}) const override;
  std::unique_ptr<storage::GroupReader> read_from(storage::Position from,
                                                  std::string_view pool = {}) override;
  storage::Position end_position() const override;
  void continue_from(storage::Position position) override;
  // Appends the records at end_position(), end_position() + 1, ... (window_start = the first)
  // and syncs once.
  storage::CommittedWindow commit(std::vector<v1::JournalRecord> window) override;
  // The same bytes as commit() of the records the window stands for: each record serialized
  // without events, and the events' bytes put in before its first field past 5.
  storage::CommittedWindow commit_encoded(storage::EncodedWindow window) override;
  // Deletes whole segment files below `position` (Journal::drop_before); returns how many.
  std::size_t drop_before(storage::Position position) override;

 private:
  Journal journal_;
  // Bytes a record's payload holds besides those serialize() wrote: `bytes` go in at `at`.
  struct Inserted {
    std::size_t at = 0;
    std::string_view bytes;
  };
  // Appends one serialized record per serialize() call (what it wrote, with what it returns
  // inserted), at end_position() on, and syncs; the commit's result. Marks the log failed when
  // it throws.
  storage::CommittedWindow append_window(
      std::vector<v1::JournalRecord>& records,
      const std::function<Inserted(std::size_t, std::string&)>& serialize);

  storage::Position resume_ = 1;  // continue_from(): the least position of the next window
  bool failed_ = false;           // a commit threw: no more commits
};

}  // namespace yoke::journal
