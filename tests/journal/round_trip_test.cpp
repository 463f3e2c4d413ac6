// Records written are the records read: across rotations, reopens, empty and maximal payloads;
// appends out of order are refused; old segments are dropped after a snapshot.
#include <algorithm>
#include <array>
#include <string>
#include <string_view>

#include <gtest/gtest.h>

#include "daemon/journal/journal.h"
#include "daemon/journal/journal_format.h"
#include "daemon/journal/segment_names.h"
#include "journal_test_util.h"

namespace yoke::journal {
namespace {

using testing::append_range;
using testing::expected_range;
using testing::payload_for;
using testing::read_all;
using testing::segment_files;
using testing::small_segments;
using testing::TempDir;

constexpr std::uint64_t kRecordHeader = format::kRecordHeaderBytes;
constexpr std::uint64_t kSegmentHeader = format::kSegmentHeaderBytes;

TEST(JournalRoundTrip, ManyRecordsAcrossRotations) {
  TempDir dir;
  const Options options = small_segments(4096, Durability::group);
  {
    Journal journal = Journal::open(dir.path(), options);
    EXPECT_EQ(journal.next_position(), 0u);
    EXPECT_EQ(journal.first_position(), 0u);
    append_range(journal, 1, 3000);
    EXPECT_EQ(journal.next_position(), 3001u);
  }
  const auto files = segment_files(dir.path());
  ASSERT_GE(files.size(), 20u);
  for (const auto& file : files) EXPECT_LE(std::filesystem::file_size(file), 4096u) << file;
  EXPECT_EQ(read_all(dir.path()), expected_range(1, 3000));

  Journal reopened = Journal::open(dir.path(), options);
  EXPECT_EQ(reopened.recovery().records, 3000u);
  EXPECT_EQ(reopened.recovery().segments, files.size());
  EXPECT_FALSE(reopened.recovery().cut);
  EXPECT_EQ(reopened.first_position(), 1u);
  EXPECT_EQ(reopened.next_position(), 3001u);
}

TEST(JournalRoundTrip, SegmentsStartWhereThePreviousEnds) {
  TempDir dir;
  {
    Journal journal = Journal::open(dir.path(), small_segments(1000));
    append_range(journal, 1, 500);
  }
  const auto files = segment_files(dir.path());
  ASSERT_GE(files.size(), 10u);
  std::uint64_t position = 1;
  for (std::size_t i = 0; i < files.size(); ++i) {
    EXPECT_EQ(parse_segment_file_name(files[i].filename().string()), position) << files[i];
    const std::uint64_t next_first =
        i + 1 < files.size() ? *parse_segment_file_name(files[i + 1].filename().string()) : 501;
    // The segment's size is its header plus exactly its records.
    std::uint64_t bytes = kSegmentHeader;
    for (; position < next_first; ++position) bytes += kRecordHeader + payload_for(position).size();
    EXPECT_EQ(std::filesystem::file_size(files[i]), bytes) << files[i];
  }
}

TEST(JournalRoundTrip, ReopenAndContinueAppending) {
  TempDir dir;
  const Options options = small_segments(2048, Durability::group);
  {
    Journal journal = Journal::open(dir.path(), options);
    append_range(journal, 1, 100);
  }
  for (std::uint64_t round = 1; round <= 3; ++round) {
    Journal journal = Journal::open(dir.path(), options);
    EXPECT_EQ(journal.next_position(), 100 * round + 1);
    EXPECT_THROW(journal.append(100 * round, "again"), Error);
    append_range(journal, 100 * round + 1, 100 * (round + 1));
  }
  EXPECT_EQ(read_all(dir.path()), expected_range(1, 400));
}

TEST(JournalRoundTrip, UnsyncedRecordsReachTheFileOnCleanClose) {
  TempDir dir;
  {
    Journal journal = Journal::open(dir.path(), small_segments(1 << 20, Durability::group));
    for (std::uint64_t position = 1; position <= 50; ++position) {
      journal.append(position, payload_for(position));
    }
  }
  EXPECT_EQ(read_all(dir.path()), expected_range(1, 50));
}

TEST(JournalRoundTrip, EveryDurabilityPolicyRoundTrips) {
  for (const Durability durability :
       {Durability::every_batch, Durability::group, Durability::none}) {
    TempDir dir;
    {
      Journal journal = Journal::open(dir.path(), small_segments(512, durability));
      append_range(journal, 1, 30);
    }
    EXPECT_EQ(read_all(dir.path()), expected_range(1, 30));
  }
}

TEST(JournalRoundTrip, ZeroLengthPayloads) {
  TempDir dir;
  {
    Journal journal = Journal::open(dir.path(), small_segments(200));
    for (std::uint64_t position = 1; position <= 40; ++position) {
      journal.append(position, position % 3 == 0 ? payload_for(position) : "");
    }
    journal.sync();
  }
  const auto records = read_all(dir.path());
  ASSERT_EQ(records.size(), 40u);
  for (const auto& [position, payload] : records) {
    EXPECT_EQ(payload, position % 3 == 0 ? payload_for(position) : "") << position;
  }
  EXPECT_GE(segment_files(dir.path()).size(), 3u);
}

TEST(JournalRoundTrip, MaximumRecordSize) {
  TempDir dir;
  Options options = small_segments(1000);
  options.max_record_bytes = 3000;
  Journal journal = Journal::open(dir.path(), options);
  const std::string largest(3000, 'x');
  journal.append(1, "small");
  journal.append(2, largest);  // larger than a segment: it gets one to itself
  try {
    journal.append(3, largest + "y");
    FAIL() << "a record over the limit was accepted";
  } catch (const Error& error) {
    EXPECT_NE(std::string(error.what()).find("3001 bytes exceeds the maximum record size of 3000"),
              std::string::npos)
        << error.what();
  }
  journal.append(3, "after");  // the refusal changed nothing
  journal.sync();
  EXPECT_EQ(read_all(dir.path()),
            (testing::Records{{1, "small"}, {2, largest}, {3, "after"}}));
  EXPECT_EQ(segment_files(dir.path()).size(), 3u);

  Options too_large;
  too_large.max_record_bytes = format::kMaxPayloadBytes + 1;
  TempDir other;
  EXPECT_THROW(Journal::open(other.path(), too_large), Error);
}

// A payload given in pieces is the record their concatenation makes, byte for byte in the
// files: small records (buffered) and records of 1 MiB and more (written from their pieces
// past the buffer), among buffered ones, in the order appended.
TEST(JournalRoundTrip, PayloadPiecesWriteTheJoinedRecord) {
  TempDir dir;
  const Options options = small_segments(std::uint64_t{8} << 20);
  Journal joined = Journal::open(dir.path() / "joined", options);
  Journal pieces = Journal::open(dir.path() / "pieces", options);
  testing::Records expected;
  std::uint64_t position = 1;
  for (const std::size_t size : {std::size_t{40}, std::size_t{3} << 20, std::size_t{0},
                                 (std::size_t{1} << 20) - 20, std::size_t{1} << 20,
                                 std::size_t{77}, (std::size_t{5} << 20) + 3}) {
    std::string payload(size, '\0');
    for (std::size_t i = 0; i < size; ++i) payload[i] = static_cast<char>((i * 131 + size) % 251);
    const std::string_view whole(payload);
    const std::size_t cut = size / 3;
    const std::array<std::string_view, 3> parts{whole.substr(0, 7 % (size + 1)),
                                                whole.substr(7 % (size + 1), cut),
                                                whole.substr(std::min(size, 7 % (size + 1) + cut))};
    joined.append(position, payload);
    pieces.append(position, parts);
    expected.emplace_back(position++, payload);
  }
  joined.sync();
  pieces.sync();
  EXPECT_EQ(read_all(dir.path() / "pieces"), expected);
  const auto joined_files = segment_files(dir.path() / "joined");
  const auto piece_files = segment_files(dir.path() / "pieces");
  ASSERT_EQ(piece_files.size(), joined_files.size());
  for (std::size_t i = 0; i < joined_files.size(); ++i) {
    EXPECT_EQ(piece_files[i].filename(), joined_files[i].filename());
    EXPECT_TRUE(testing::read_file(piece_files[i]) == testing::read_file(joined_files[i]))
        << piece_files[i];
  }
}

TEST(JournalRoundTrip, PositionsMustRiseByOne) {
  TempDir dir;
  Journal journal = Journal::open(dir.path(), small_segments(4096));
  EXPECT_THROW(journal.append(0, "zero"), Error);
  journal.append(1000, "first");  // an empty journal starts anywhere (after a snapshot)
  try {
    journal.append(1002, "gap");
    FAIL() << "a gap was accepted";
  } catch (const Error& error) {
    EXPECT_NE(std::string(error.what()).find("append of position 1002, expected 1001"),
              std::string::npos)
        << error.what();
  }
  EXPECT_THROW(journal.append(1000, "duplicate"), Error);
  EXPECT_THROW(journal.append(999, "backwards"), Error);
  journal.append(1001, "second");
  journal.sync();
  EXPECT_EQ(read_all(dir.path()), (testing::Records{{1000, "first"}, {1001, "second"}}));
  EXPECT_EQ(journal.first_position(), 1000u);
  EXPECT_EQ(journal.next_position(), 1002u);
}

TEST(JournalRoundTrip, ReadAfterSkipsToTheRecordsWanted) {
  TempDir dir;
  Journal journal = Journal::open(dir.path(), small_segments(1024));
  append_range(journal, 1, 300);
  for (std::uint64_t unsynced = 301; unsynced <= 310; ++unsynced) {
    journal.append(unsynced, payload_for(unsynced));
  }
  for (const std::uint64_t after : {0u, 1u, 57u, 299u, 300u, 309u, 310u, 400u}) {
    testing::Records records;
    Reader reader = journal.read_after(after);
    while (auto record = reader.next()) records.emplace_back(record->position, record->payload);
    EXPECT_EQ(records, expected_range(after + 1, 310)) << "after " << after;
    EXPECT_FALSE(reader.tail());
  }
}

TEST(JournalRoundTrip, DropBeforeDeletesWholeSegmentsBelow) {
  TempDir dir;
  const Options options = small_segments(1024);
  Journal journal = Journal::open(dir.path(), options);
  append_range(journal, 1, 400);
  const std::vector<std::uint64_t> before = list_segments(dir.path());
  ASSERT_GE(before.size(), 6u);

  // Up to the first record of the fourth segment: the first three go.
  EXPECT_EQ(journal.drop_before(before[3]), 3u);
  EXPECT_EQ(list_segments(dir.path()), std::vector<std::uint64_t>(before.begin() + 3, before.end()));
  EXPECT_EQ(journal.first_position(), before[3]);
  // One record short of the next boundary: nothing more goes.
  EXPECT_EQ(journal.drop_before(before[4]), 1u);
  EXPECT_EQ(journal.drop_before(before[5] - 1), 0u);
  EXPECT_EQ(journal.first_position(), before[4]);

  // Replay after a snapshot: records after it, and a snapshot older than the journal fails.
  testing::Records replayed;
  Reader reader = journal.read_after(before[5] - 2);
  while (auto record = reader.next()) replayed.emplace_back(record->position, record->payload);
  EXPECT_EQ(replayed, expected_range(before[5] - 1, 400));
  EXPECT_THROW(journal.read_after(before[4] - 2), Error);

  // Never the segment being appended to, even past the end.
  EXPECT_EQ(journal.drop_before(10'000), before.size() - 5);
  EXPECT_EQ(list_segments(dir.path()), std::vector<std::uint64_t>{before.back()});
  append_range(journal, 401, 420);

  Journal moved = std::move(journal);
  TempDir other;
  moved = Journal::open(other.path(), options);  // closes the first journal, unlocking it
  Journal reopened = Journal::open(dir.path(), options);
  EXPECT_EQ(reopened.first_position(), before.back());
  EXPECT_EQ(reopened.next_position(), 421u);
  EXPECT_EQ(read_all(dir.path()), expected_range(before.back(), 420));
}

TEST(JournalRoundTrip, OneJournalPerDirectory) {
  TempDir dir;
  Journal journal = Journal::open(dir.path());
  try {
    Journal second = Journal::open(dir.path());
    FAIL() << "a second journal opened the same directory";
  } catch (const Error& error) {
    EXPECT_NE(std::string(error.what()).find("already open"), std::string::npos) << error.what();
  }
}

TEST(JournalRoundTrip, CreatesTheDirectoryAndIgnoresOtherFiles) {
  TempDir dir;
  const std::filesystem::path nested = dir / "data/journal/";
  {
    Journal journal = Journal::open(nested);
    append_range(journal, 1, 5);
  }
  testing::write_file(nested / "notes.txt", "not a segment");
  EXPECT_EQ(read_all(nested), expected_range(1, 5));
  testing::write_file(nested / "12.seg", "misnamed");
  EXPECT_THROW(Journal::open(nested), Error);
}

}  // namespace
}  // namespace yoke::journal
