// What the contract leaves to the local backend (daemon/journal/journal_commit_log.h,
// daemon/snapshots/snapshot_directory.h): records on disk in the order accepted with the
// window's first position as window_start, a failed commit refusing later ones, a torn tail
// (seen by a view, cut by the writer), damage elsewhere, the directory lock, a snapshot file
// under another position's name.
//
// Sources of the expected values: daemon/journal/FORMAT.md and daemon/snapshots/FORMAT.md, and
// the contracts in the headers named above.
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/journal/journal_commit_log.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "daemon/storage/storage_error.h"
#include "tests/journal/journal_test_util.h"

namespace yoke::journal {
namespace {

using testing::TempDir;

v1::JournalRecord batch_record(const std::string& pool, std::uint64_t seq,
                               std::size_t padding = 0) {
  v1::JournalRecord record;
  record.set_pool(pool);
  record.set_seq(seq);
  record.set_client_id(std::string(padding, 'p'));
  return record;
}

std::vector<v1::JournalRecord> on_disk(const std::filesystem::path& dir) {
  std::vector<v1::JournalRecord> records;
  Reader reader = Reader::from_start(dir);
  while (auto record = reader.next()) {
    v1::JournalRecord& parsed = records.emplace_back();
    EXPECT_TRUE(parsed.ParseFromArray(record->payload.data(),
                                      static_cast<int>(record->payload.size())));
  }
  return records;
}

std::size_t groups_read(storage::GroupReader& reader) {
  std::size_t groups = 0;
  while (reader.next()) ++groups;
  return groups;
}

TEST(JournalCommitLog, RecordsGoToDiskInTheOrderAcceptedWithTheWindowsFirstPosition) {
  TempDir dir;
  const auto log = JournalCommitLog::open(dir.path(), testing::small_segments(1 << 20));
  const storage::CommittedWindow first =
      log->commit({batch_record("quay", 1), batch_record("dock", 1), batch_record("quay", 2)});
  const storage::CommittedWindow second = log->commit({batch_record("dock", 2)});
  EXPECT_EQ(first.position, 1u);
  EXPECT_EQ(first.end, 4u);
  EXPECT_EQ(second.position, 4u);
  EXPECT_EQ(second.end, 5u);
  const std::vector<v1::JournalRecord> records = on_disk(dir.path());
  ASSERT_EQ(records.size(), 4u);
  const std::vector<std::pair<std::string, std::uint64_t>> expected = {
      {"quay", 1}, {"dock", 1}, {"quay", 1}, {"dock", 4}};
  for (std::size_t i = 0; i < records.size(); ++i) {
    EXPECT_EQ(records[i].pool(), expected[i].first) << i;
    EXPECT_EQ(records[i].window_start(), expected[i].second) << i;
  }
}

TEST(JournalCommitLog, AFailedCommitRefusesTheNextOnes) {
  TempDir dir;
  Options options = testing::small_segments(1 << 20);
  options.max_record_bytes = 200;
  const auto log = JournalCommitLog::open(dir.path(), options);
  log->commit({batch_record("quay", 1)});
  EXPECT_THROW(log->commit({batch_record("quay", 2, 500)}), storage::LogError);
  try {
    log->commit({batch_record("quay", 2)});
    ADD_FAILURE() << "a commit after a failed one was taken";
  } catch (const storage::LogError& error) {
    EXPECT_NE(std::string(error.what()).find("after a failed one"), std::string::npos)
        << error.what();
  }
  EXPECT_EQ(log->commit({}).position, 0u);  // an empty window stores nothing: no error
}

TEST(JournalCommitLog, TornTailIsSeenByAViewAndCutByTheWriter) {
  TempDir dir;
  {
    const auto log = JournalCommitLog::open(dir.path(), testing::small_segments(1 << 20));
    log->commit({batch_record("quay", 1), batch_record("dock", 1)});
    log->commit({batch_record("quay", 2)});
  }
  const std::filesystem::path segment = testing::segment_files(dir.path()).back();
  testing::write_file(segment, testing::read_file(segment) + std::string(9, '\x7f'));

  JournalView view(dir.path());
  const auto reader = view.read_from(0);
  EXPECT_EQ(groups_read(*reader), 3u);
  ASSERT_TRUE(reader->stopped_early().has_value());
  EXPECT_NE(reader->stopped_early()->find("damaged tail"), std::string::npos);
  EXPECT_NE(reader->stopped_early()->find(segment.filename().string()), std::string::npos);

  const auto log = JournalCommitLog::open(dir.path(), testing::small_segments(1 << 20));
  ASSERT_TRUE(log->recovery().cut.has_value());
  const auto after_cut = log->read_from(0);
  EXPECT_EQ(groups_read(*after_cut), 3u);
  EXPECT_FALSE(after_cut->stopped_early().has_value());
  EXPECT_EQ(log->end_position(), 4u);
}

TEST(JournalCommitLog, DamageBeforeTheLastSegmentIsLogDamage) {
  TempDir dir;
  {
    const auto log = JournalCommitLog::open(dir.path(), testing::small_segments(256));
    for (std::uint64_t seq = 1; seq <= 20; ++seq) log->commit({batch_record("quay", seq, 40)});
  }
  const std::vector<std::filesystem::path> segments = testing::segment_files(dir.path());
  ASSERT_GE(segments.size(), 3u);
  testing::flip_bit(segments[0], 40, 2);  // inside the first record (after the 24-byte header)
  JournalView view(dir.path());
  EXPECT_THROW(groups_read(*view.read_from(0)), storage::LogDamage);
  EXPECT_THROW(JournalCommitLog::open(dir.path(), testing::small_segments(256)),
               storage::LogDamage);
}

TEST(JournalCommitLog, OneWriterAtATime) {
  TempDir dir;
  const auto log = JournalCommitLog::open(dir.path());
  EXPECT_THROW(JournalCommitLog::open(dir.path()), storage::LogError);
  // A view takes no lock.
  log->commit({batch_record("quay", 1)});
  EXPECT_EQ(groups_read(*JournalView(dir.path()).read_from(0)), 1u);
}

TEST(SnapshotDirectory, AFileUnderAnotherPositionsNameIsDamage) {
  TempDir dir;
  daemon::SnapshotDirectory store(dir.path(), 3);
  store.write(10, {});
  std::filesystem::copy_file(store.path_for(10), store.path_for(20));
  try {
    store.read(20);
    ADD_FAILURE() << "a snapshot under another position's name was read";
  } catch (const storage::SnapshotDamage& damage) {
    EXPECT_NE(std::string(damage.what()).find(store.path_for(20).filename().string()),
              std::string::npos)
        << damage.what();
  }
  EXPECT_EQ(store.read(10).position, 10u);
}

}  // namespace
}  // namespace yoke::journal
