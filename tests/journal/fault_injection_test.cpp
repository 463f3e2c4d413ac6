// The fault-injecting file system (faulty_file_system.h) on its own, and the journal's answer to
// a failed write or sync: it refuses further work and cuts back to what it last reported
// durable. Also the bounded wait for the directory's lock. Sources of the expected values: the
// records appended (payload_for) and what was synced before each crash.
#include <fcntl.h>

#include <cerrno>
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

TEST(FaultyFileSystem, CrashForgetsDirectoriesWhoseEntriesWereNotSynced) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  const std::filesystem::path kept = dir / "kept" / "inner";
  create_directories_durably(kept);
  {
    const FileDescriptor file = open_file(kept / "f", O_WRONLY | O_CREAT | O_EXCL);
    write_all(file, "bytes", kept / "f");
    sync_data(file, kept / "f");
  }
  sync_directory(open_directory(kept), kept);
  ASSERT_EQ(files.make_directory(dir / "lost", 0755), 0);  // its parent never synced
  {
    const FileDescriptor file = open_file(dir / "lost" / "f", O_WRONLY | O_CREAT | O_EXCL);
    write_all(file, "bytes", dir / "lost" / "f");
    sync_data(file, dir / "lost" / "f");
  }
  sync_directory(open_directory(dir / "lost"), dir / "lost");
  files.crash();
  EXPECT_EQ(read_file(kept / "f"), "bytes");
  EXPECT_FALSE(std::filesystem::exists(dir / "lost"));
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
    // open, one write a piece, one write-back a whole piece
    EXPECT_EQ(files.calls(), 2u + (bytes.size() + 4095) / 4096 + (4 + bytes.size()) / 4096);
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

// What the kernel does after a failed write-back: the pages are marked clean, still read back as
// written, and the error is reported once; a later fdatasync returns 0 without writing them.
TEST(FaultyFileSystem, BytesOfAFailedSyncAreLostEvenAfterALaterSyncUnlessWrittenAgain) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  const std::filesystem::path path = dir / "f";
  {
    const FileDescriptor file = open_file(path, O_WRONLY | O_CREAT | O_EXCL);
    write_all(file, "durable ", path);
    sync_data(file, path);
    write_all(file, "dropped ", path);
    files.fail_at(1);
    EXPECT_THROW(sync_data(file, path), Error);
    EXPECT_EQ(read_file(path), "durable dropped ");  // the cache still has them
    write_all(file, "after", path);
    EXPECT_NO_THROW(sync_data(file, path));  // returns 0: proves nothing about "dropped "
  }
  sync_directory(open_directory(dir.path()), dir.path());
  files.crash();
  EXPECT_EQ(read_file(path), "durable " + std::string(8, '\0') + "after");
  {
    const FileDescriptor file = open_file(path, O_WRONLY);
    write_all(file, "durable ", path);
    files.fail_at(1);
    EXPECT_THROW(sync_data(file, path), Error);
    write_all(file, "rewrite ", path);  // over the lost bytes, in place: dirty again
    sync_data(file, path);
  }
  files.crash();
  EXPECT_EQ(read_file(path), "durable rewrite after");
}

TEST(FaultyFileSystem, ShortWritesAndOtherErrnos) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  const std::filesystem::path path = dir / "f";
  const FileDescriptor file = open_file(path, O_WRONLY | O_CREAT | O_EXCL);
  files.shorten_writes(3);
  write_all(file, "0123456789", path);  // four calls of at most 3 bytes, no error
  EXPECT_EQ(read_file(path), "0123456789");
  EXPECT_EQ(files.calls(), 5u);
  EXPECT_FALSE(files.failed());
  files.shorten_writes(0);
  files.fail_with(EINTR);
  files.fail_at(1);
  write_all(file, "ab", path);  // interrupted before writing anything, then written
  EXPECT_EQ(read_file(path), "0123456789ab");
  files.fail_with(ENOSPC);
  files.fail_at(1);
  try {
    write_all(file, "cdef", path);
    ADD_FAILURE() << "a full disk was not reported";
  } catch (const Error& error) {
    EXPECT_NE(std::string(error.what()).find("No space left on device"), std::string::npos)
        << error.what();
  }
}

// A piece's write-back fails: the kernel has reported the error to this call and would not
// report it to the file's fdatasync, so the paced write must fail here.
TEST(PacedWrites, AFailedWriteBackFailsTheWrite) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  const std::string bytes(3 * 4096, 'x');
  const FileDescriptor file = open_file(dir / "f", O_WRONLY | O_CREAT | O_EXCL);
  files.fail_at(2);  // the next calls: write, write-back of the first piece
  EXPECT_THROW(write_paced(file, bytes, 0, 4096, dir / "f"), Error);
  EXPECT_EQ(files.trace().at(2), "write-back " + (dir / "f").string());
}

// A failed call while a journal opens (a read above all) is an error, never a torn tail to cut:
// cutting there would remove acknowledged records.
TEST(JournalFaults, AFailedCallAtOpenFailsTheOpenAndCutsNothing) {
  TempDir dir;
  {
    Journal journal = Journal::open(dir.path(), testing::small_segments(512, Durability::group));
    testing::append_range(journal, 1, 30);
    journal.sync();
  }
  const auto before = read_all(dir.path());
  for (std::uint64_t n = 1;; ++n) {
    FaultyFileSystem files;
    const ScopedFileSystem installed(files);
    files.fail_at(n);
    try {
      Journal journal = Journal::open(dir.path(), testing::small_segments(512, Durability::group));
      EXPECT_FALSE(files.failed()) << "call " << n << " failed and the open went on";
      break;  // no call left to fail
    } catch (const Error&) {
      EXPECT_TRUE(files.failed());
    }
    EXPECT_EQ(read_all(dir.path()), before)
        << "after failing call " << n << " (" << files.trace().at(n - 1) << ")";
  }
  EXPECT_EQ(read_all(dir.path()), expected_range(1, 30));
}

// The journal stops after a failed sync whose cut failed too (a disk gone for a while); the OS
// keeps the unsynced records in its cache, clean after the failed write-back, and a restart
// reads them as if on disk. Records acknowledged after that restart must survive a power loss,
// so the reopen writes them back again: without that, the power loss zeroes them and the next
// open cuts the acknowledged records after them as a torn tail.
TEST(JournalFaults, AReopenAfterAFailedSyncAndCutWritesTheCachedTailBackAgain) {
  TempDir dir;
  FaultyFileSystem files;
  const ScopedFileSystem installed(files);
  const Options options = testing::small_segments(1 << 20, Durability::group);
  {
    Journal journal = Journal::open(dir.path(), options);
    testing::append_range(journal, 1, 10);
    journal.sync();
    for (std::uint64_t position = 11; position <= 20; ++position) {
      journal.append(position, testing::payload_for(position));
    }
    (void)journal.read_after(0);  // hands 11..20 to the OS: the sync's first call is fdatasync
    files.fail_at(1, true);       // the sync and every call of the cut after it
    EXPECT_THROW(journal.sync(), Error);
    EXPECT_EQ(files.trace().at(files.trace().size() - 2).substr(0, 5), "sync ");
  }
  files.fail_at(0);  // the disk is back; the process restarts with the OS's cache
  {
    Journal journal = Journal::open(dir.path(), options);
    EXPECT_EQ(journal.next_position(), 21u);  // records 11..20 came back from the cache
    testing::append_range(journal, 21, 30);
    journal.sync();  // 21..30 acknowledged
  }
  files.crash();
  Journal journal = Journal::open(dir.path(), options);
  EXPECT_EQ(journal.next_position(), 31u);
  EXPECT_FALSE(journal.recovery().cut);
  EXPECT_EQ(read_all(dir.path()), expected_range(1, 30));
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
