// Damage that is not a torn tail: recovery refuses, naming the segment and the offset, and
// changes no file.
#include <gtest/gtest.h>

#include "daemon/journal/crc32c.h"
#include "daemon/journal/journal.h"
#include "daemon/journal/journal_format.h"
#include "daemon/journal/record_codec.h"
#include "daemon/journal/segment_names.h"
#include "journal_test_util.h"

namespace yoke::journal {
namespace {

using testing::expected_range;
using testing::payload_for;
using testing::read_all;
using testing::read_file;
using testing::segment_files;
using testing::small_segments;
using testing::TempDir;
using testing::write_file;

const Options kCorruptionOptions = small_segments(400);

// Records 1..30 in several segments.
void write_journal(const std::filesystem::path& dir) {
  Journal journal = Journal::open(dir, kCorruptionOptions);
  testing::append_range(journal, 1, 30);
}

// Opening must throw Corruption naming `segment` at `offset`, with `reason` in the message.
void expect_corruption(const std::filesystem::path& dir, const std::filesystem::path& segment,
                       std::uint64_t offset, const std::string& reason) {
  try {
    Journal journal = Journal::open(dir, kCorruptionOptions);
    ADD_FAILURE() << "opened a journal damaged in " << segment << " at " << offset;
  } catch (const Corruption& error) {
    EXPECT_EQ(error.segment(), segment);
    EXPECT_EQ(error.offset(), offset);
    const std::string message = error.what();
    EXPECT_NE(message.find(segment.filename().string()), std::string::npos) << message;
    EXPECT_NE(message.find("offset " + std::to_string(offset)), std::string::npos) << message;
    EXPECT_NE(message.find(reason), std::string::npos) << message;
  }
}

// The start of each record of a segment written by write_journal, and the segment's end.
std::vector<std::uint64_t> record_starts(const std::filesystem::path& segment) {
  std::uint64_t position = *parse_segment_file_name(segment.filename().string());
  const std::uint64_t size = std::filesystem::file_size(segment);
  std::vector<std::uint64_t> starts;
  for (std::uint64_t at = format::kSegmentHeaderBytes; at < size; ++position) {
    starts.push_back(at);
    at += format::kRecordHeaderBytes + payload_for(position).size();
  }
  starts.push_back(size);
  return starts;
}

std::string forge_segment(std::uint64_t first_position, const testing::Records& records) {
  std::string bytes;
  append_segment_header(bytes, first_position);
  for (const auto& [position, payload] : records) append_record(bytes, position, payload);
  return bytes;
}

TEST(JournalCorruption, FlippedBitInAnEarlierSegmentNamesIt) {
  TempDir dir;
  write_journal(dir.path());
  const auto files = segment_files(dir.path());
  ASSERT_GE(files.size(), 4u);
  for (const std::size_t which : {std::size_t{0}, files.size() - 2}) {
    const std::filesystem::path segment = files[which];
    const std::string original = read_file(segment);
    const std::vector<std::uint64_t> starts = record_starts(segment);
    ASSERT_EQ(starts.back(), original.size());
    for (std::uint64_t byte = 0; byte < original.size(); ++byte) {
      SCOPED_TRACE(segment.filename().string() + " byte " + std::to_string(byte));
      const int bit = static_cast<int>(byte % 8);
      testing::flip_bit(segment, byte, bit);
      // The offset named is the damaged record's start, or 0 within the header.
      std::uint64_t offset = 0;
      for (const std::uint64_t start : starts) {
        if (start <= byte) offset = start;
      }
      expect_corruption(dir.path(), segment, byte < format::kSegmentHeaderBytes ? 0 : offset, "");
      EXPECT_EQ(std::filesystem::file_size(segment), original.size()) << "recovery cut it";
      testing::flip_bit(segment, byte, bit);
    }
    EXPECT_EQ(read_file(segment), original);
  }
  EXPECT_EQ(read_all(dir.path()), expected_range(1, 30));
}

TEST(JournalCorruption, WrongMagicOrVersionInAnySegment) {
  TempDir dir;
  write_journal(dir.path());
  const auto files = segment_files(dir.path());
  for (const auto& segment : {files.front(), files.back()}) {
    SCOPED_TRACE(segment.filename().string());
    const std::string original = read_file(segment);

    std::string bytes = original;
    bytes.replace(0, 8, "NOTYOKE!");
    write_file(segment, bytes);
    expect_corruption(dir.path(), segment, 0, "wrong magic");

    // Version 2 with a header checksum that matches: refused for the version alone.
    bytes = original;
    bytes[format::kHeaderVersionOffset] = 2;
    const std::uint32_t crc =
        crc32c(std::string_view(bytes).substr(0, format::kHeaderChecksumOffset));
    for (int i = 0; i < 4; ++i) {
      bytes[format::kHeaderChecksumOffset + static_cast<std::size_t>(i)] =
          static_cast<char>(crc >> (8 * i));
    }
    write_file(segment, bytes);
    expect_corruption(dir.path(), segment, 0, "unsupported journal format version 2");

    write_file(segment, original);
  }
  EXPECT_EQ(read_all(dir.path()), expected_range(1, 30));
}

TEST(JournalCorruption, TornHeaderBeforeTheLastSegment) {
  TempDir dir;
  write_journal(dir.path());
  const std::filesystem::path first = segment_files(dir.path()).front();
  std::filesystem::resize_file(first, 10);
  expect_corruption(dir.path(), first, 0, "segment header cut short (10 of 24 bytes)");
}

TEST(JournalCorruption, SegmentRenamed) {
  TempDir dir;
  write_journal(dir.path());
  std::filesystem::rename(dir / segment_file_name(1), dir / segment_file_name(2));
  expect_corruption(dir.path(), dir / segment_file_name(2), format::kHeaderFirstPositionOffset,
                    "header says the first position is 1, the file name says 2");
}

TEST(JournalCorruption, MissingSegmentIsAPositionGap) {
  TempDir dir;
  write_journal(dir.path());
  const auto files = segment_files(dir.path());
  std::filesystem::remove(files[1]);
  const std::uint64_t removed_first = *parse_segment_file_name(files[1].filename().string());
  const std::uint64_t next_first = *parse_segment_file_name(files[2].filename().string());
  expect_corruption(dir.path(), files[2], 0,
                    "position gap: the segment starts at " + std::to_string(next_first) +
                        " but the previous segment ends at " + std::to_string(removed_first - 1));
}

TEST(JournalCorruption, GapOrDuplicateInsideASegment) {
  TempDir dir;
  const std::uint64_t bad_offset = forge_segment(1, {{1, "one"}, {2, "two"}}).size();

  // Not the last segment: an error at the misplaced record.
  write_file(dir / segment_file_name(1), forge_segment(1, {{1, "one"}, {2, "two"}, {4, "four"}}));
  write_file(dir / segment_file_name(3), forge_segment(3, {{3, "three"}}));
  expect_corruption(dir.path(), dir / segment_file_name(1), bad_offset,
                    "record has position 4, expected 3");
  write_file(dir / segment_file_name(1), forge_segment(1, {{1, "one"}, {2, "two"}, {2, "two"}}));
  expect_corruption(dir.path(), dir / segment_file_name(1), bad_offset,
                    "record has position 2, expected 3");

  // The last segment: the misplaced record and what follows are cut.
  std::filesystem::remove(dir / segment_file_name(3));
  write_file(dir / segment_file_name(1),
             forge_segment(1, {{1, "one"}, {2, "two"}, {4, "four"}, {5, "five"}}));
  {
    Journal journal = Journal::open(dir.path(), kCorruptionOptions);
    ASSERT_TRUE(journal.recovery().cut);
    EXPECT_EQ(journal.recovery().cut->offset, bad_offset);
    EXPECT_NE(journal.recovery().cut->reason.find("expected 3"), std::string::npos);
    EXPECT_EQ(journal.next_position(), 3u);
    journal.append(3, "three");
    journal.sync();
  }
  EXPECT_EQ(read_all(dir.path()), (testing::Records{{1, "one"}, {2, "two"}, {3, "three"}}));
}

TEST(JournalCorruption, RecordsBeforeTheDamageAreStillReadable) {
  TempDir dir;
  write_journal(dir.path());
  const auto files = segment_files(dir.path());
  std::string bytes = read_file(files[1]);
  // The first record's position.
  bytes[format::kSegmentHeaderBytes + format::kRecordPositionOffset] ^= 1;
  write_file(files[1], bytes);
  Reader reader = Reader::from_start(dir.path());
  std::uint64_t last = 0;
  EXPECT_THROW(
      {
        while (auto record = reader.next()) last = record->position;
      },
      Corruption);
  EXPECT_EQ(last, *parse_segment_file_name(files[1].filename().string()) - 1);
}

}  // namespace
}  // namespace yoke::journal
