// The fault-injecting file system (faulty_file_system.h) on its own, and the journal's answer to
// a failed write or sync: it refuses further work and cuts back to what it last reported
// durable. Also the bounded wait for the directory's lock. Sources of the expected values: the
// records appended (payload_for) and what was synced before each crash.
#include <fcntl.h>

#include <chrono>
#include <filesystem>
#include <string>
#include <thread>

#include <gtest/gtest.h>

#include "daemon/journal/file_system.h"
#include "daemon/journal/journal.h"
#include "daemon/journal/posix_file.h"
#include "faulty_file_system.h"
#include "journal_test_util.h"

namespace yoke::journal {
namespace {

using testing::expected_range;
using testing::FaultyFileSystem;
using testing::read_all;
using testing::read_file;
using testing::TempDir;

TEST(FaultyFileSystem, CrashForgetsWhatWasNotSynced) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  {
    const FileDescriptor kept = open_file(dir / "kept", O_WRONLY | O_CREAT | O_EXCL);
    write_all(kept, "synced", dir / "kept");
    sync_data(kept, dir / "kept");
    write_all(kept, " and not", dir / "kept");
  }
  sync_directory(open_directory(dir.path()), dir.path());  // "kept" is in the directory now
  {
    const FileDescriptor fresh = open_file(dir / "fresh", O_WRONLY | O_CREAT | O_EXCL);
    write_all(fresh, "data synced, entry not", dir / "fresh");
    sync_data(fresh, dir / "fresh");
  }
  rename_file(dir / "kept", dir / "renamed");
  files.crash();
  EXPECT_EQ(read_file(dir / "kept"), "synced");  // the rename is undone, the tail forgotten
  EXPECT_FALSE(std::filesystem::exists(dir / "renamed"));
  EXPECT_FALSE(std::filesystem::exists(dir / "fresh"));  // its directory entry never reached the disk

  // A removal not made durable comes back; one made durable does not.
  remove_file(dir / "kept");
  files.crash();
  EXPECT_EQ(read_file(dir / "kept"), "synced");
  remove_file(dir / "kept");
  sync_directory(open_directory(dir.path()), dir.path());
  files.crash();
  EXPECT_FALSE(std::filesystem::exists(dir / "kept"));
}

TEST(FaultyFileSystem, FailsTheNthCallAndWithPersistentEveryLaterOne) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  const FileDescriptor file = open_file(dir / "f", O_WRONLY | O_CREAT | O_EXCL);
  files.fail_at(2);
  write_all(file, "one", dir / "f");
  EXPECT_THROW(write_all(file, "four", dir / "f"), Error);  // half of it reached the file
  EXPECT_EQ(read_file(dir / "f"), "onefo");
  EXPECT_NO_THROW(sync_data(file, dir / "f"));
  files.fail_at(1, true);
  EXPECT_THROW(sync_data(file, dir / "f"), Error);
  EXPECT_THROW(open_file(dir / "g", O_WRONLY | O_CREAT), Error);
  EXPECT_EQ(files.calls(), 6u);
  EXPECT_EQ(files.trace().front(), "open " + (dir / "f").string());
}

// write_paced (the snapshot files' writer): every piece in order, the end offset returned; the
// write-back it asks for is a hint, so under the fault model its bytes are as undurable as any
// until sync_data, and a crash before that forgets them.
TEST(PacedWrites, WriteEveryPieceInOrderAndAreDurableOnlyWhenSynced) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  std::string bytes;
  for (int i = 0; i < 70000; ++i) bytes += static_cast<char>('a' + i % 26);
  {
    const FileDescriptor file = open_file(dir / "f", O_WRONLY | O_CREAT | O_EXCL);
    write_all(file, "head", dir / "f");
    EXPECT_EQ(write_paced(file, bytes, 4, 4096, dir / "f"), 4 + bytes.size());
    EXPECT_TRUE(read_file(dir / "f") == "head" + bytes);
    EXPECT_EQ(files.calls(), 2u + (bytes.size() + 4095) / 4096);  // open, one write a piece
  }
  sync_directory(open_directory(dir.path()), dir.path());
  files.crash();
  EXPECT_EQ(read_file(dir / "f"), "");  // nothing of it was synced
  {
    const FileDescriptor file = open_file(dir / "g", O_WRONLY | O_CREAT | O_EXCL);
    write_paced(file, bytes, 0, 1 << 20, dir / "g");
    sync_data(file, dir / "g");
  }
  sync_directory(open_directory(dir.path()), dir.path());
  files.crash();
  EXPECT_TRUE(read_file(dir / "g") == bytes);
}

TEST(JournalFaults, AFailedSyncCutsBackToTheLastDurableRecord) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  // Small segments: the failed group spans a segment boundary, the new segments go too.
  Journal journal = Journal::open(dir.path(), testing::small_segments(512, Durability::group));
  testing::append_range(journal, 1, 20);
  for (std::uint64_t position = 21; position <= 40; ++position) {
    journal.append(position, testing::payload_for(position));
  }
  files.fail_at(1);  // the next call: the flush of records 21..40
  EXPECT_THROW(journal.sync(), Error);
  EXPECT_THROW(journal.append(41, "x"), Error);  // unusable until reopened
  EXPECT_EQ(read_all(dir.path()), expected_range(1, 20));
  Journal reopened = std::move(journal);
  reopened = Journal::open(dir / "other");  // releases the lock
  Journal again = Journal::open(dir.path(), testing::small_segments(512, Durability::group));
  EXPECT_EQ(again.next_position(), 21u);
  EXPECT_FALSE(again.recovery().cut);  // nothing torn was left behind
}

TEST(JournalLock, WaitsForAHolderThatLetsGo) {
  TempDir dir;
  auto holder = std::make_unique<Journal>(Journal::open(dir.path()));
  std::thread release([&holder] {
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
    holder.reset();
  });
  Options options;
  options.lock_wait_ms = 60'000;  // far beyond the holder's time
  Journal opened = Journal::open(dir.path(), options);
  release.join();
  EXPECT_GT(opened.recovery().lock_waited_ms, 0u);
}

TEST(JournalLock, GivesUpAfterTheWait) {
  TempDir dir;
  const Journal holder = Journal::open(dir.path());
  Options options;
  options.lock_wait_ms = 30;
  try {
    const Journal second = Journal::open(dir.path(), options);
    FAIL() << "a second journal opened the same directory";
  } catch (const Error& error) {
    EXPECT_NE(std::string(error.what()).find("already open (in this or another process) after "
                                             "waiting 30 ms"),
              std::string::npos)
        << error.what();
  }
}

}  // namespace
}  // namespace yoke::journal
