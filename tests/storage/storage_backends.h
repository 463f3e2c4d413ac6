// The storage backends the contract tests run against (commit_log_contract_test.cpp,
// snapshot_store_contract_test.cpp): each one a class with the members below, listed in
// StorageBackends (SnapshotBackends names the same list for the snapshot tests). A new backend adds its class
// here, and the same tests run against it.
//
// The JetStream backend (jetstream_backend.h) needs a cluster of nats-server processes: the
// executable built with YOKE_STORAGE_ON_JETSTREAM (storage_jetstream_tests, CTest label `nats`,
// one process so that a suite shares one cluster) lists it alone; the ordinary one lists the
// local backend.
//
//   static constexpr const char* kName;
//   set_up_suite(), tear_down_suite()  before a suite's first test and after its last
//   open_log()              the writer, over what earlier writers stored in this fixture; at
//                           most one open at a time; small storage units, so that a few
//                           windows fill several and drop_before has units to delete
//   open_view()             a read-only view of the same log
//   store_foreign_entry(p)  with no writer open: stores an entry at the log's end that is not
//                           a JournalRecord (what a reader must call damage)
//   open_snapshots(keep)    the snapshot store, keeping the newest `keep`
//   damage_snapshot(p)      makes the stored snapshot at p fail its checks
//   remove_snapshot(p)      deletes it outright
#pragma once

#include <cstdint>
#include <memory>
#include <string>

#include <gtest/gtest.h>

#include "daemon/journal/journal_commit_log.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "tests/journal/journal_test_util.h"
#ifdef YOKE_STORAGE_ON_JETSTREAM
#include "jetstream_backend.h"
#endif

namespace yoke::storage::testing {

// The local backend: a journal directory and a snapshot directory in a temporary directory.
class LocalBackend {
 public:
  static constexpr const char* kName = "local";

  static void set_up_suite() {}
  static void tear_down_suite() {}

  std::unique_ptr<CommitLog> open_log() {
    return journal::JournalCommitLog::open(journal_dir(), journal::testing::small_segments(512));
  }
  std::unique_ptr<CommitLogView> open_view() {
    return std::make_unique<journal::JournalView>(journal_dir());
  }
  void store_foreign_entry() {
    journal::Journal raw =
        journal::Journal::open(journal_dir(), journal::testing::small_segments(512));
    raw.append(raw.next_position() == 0 ? 1 : raw.next_position(), "\xff\xff not a record");
    raw.sync();
  }

  std::unique_ptr<SnapshotStore> open_snapshots(std::size_t keep) {
    return std::make_unique<daemon::SnapshotDirectory>(snapshot_dir(), keep);
  }
  void damage_snapshot(Position position) {
    const std::filesystem::path file =
        daemon::SnapshotDirectory(snapshot_dir(), 1 << 30).path_for(position);
    journal::testing::flip_bit(file, std::filesystem::file_size(file) / 2, 3);
  }
  void remove_snapshot(Position position) {
    std::filesystem::remove(daemon::SnapshotDirectory(snapshot_dir(), 1 << 30).path_for(position));
  }

  std::filesystem::path journal_dir() const { return dir_ / "journal"; }
  std::filesystem::path snapshot_dir() const { return dir_ / "snapshots"; }

 private:
  journal::testing::TempDir dir_;
};

#ifdef YOKE_STORAGE_ON_JETSTREAM
using StorageBackends = ::testing::Types<JetStreamBackend>;
#else
using StorageBackends = ::testing::Types<LocalBackend>;
#endif
using SnapshotBackends = StorageBackends;

// gtest names the typed tests' instances by backend.
struct BackendName {
  template <typename Backend>
  static std::string GetName(int) {
    return Backend::kName;
  }
};

}  // namespace yoke::storage::testing
