// A crash leaves the last segment cut short or with garbage after its last good record:
// recovery keeps exactly the records before the damage, cuts the rest, and appending goes on.
#include <gtest/gtest.h>

#include <algorithm>
#include <functional>

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
using testing::read_file;
using testing::segment_files;
using testing::small_segments;
using testing::TempDir;
using testing::write_file;

const Options kTornTailOptions = small_segments(600);
const std::string kLastPayload = "the last record, forty bytes in length..";

// A journal of records 1..20 whose last segment holds several records; record 20 carries
// kLastPayload and is the last thing in the file.
struct Reference {
  std::filesystem::path dir;
  std::filesystem::path last_segment;  // file name only
  std::uint64_t last_record_start = 0;
  std::uint64_t size = 0;
};

Reference write_reference(const std::filesystem::path& dir) {
  {
    Journal journal = Journal::open(dir, kTornTailOptions);
    for (std::uint64_t position = 1; position <= 19; ++position) {
      journal.append(position, payload_for(position));
    }
    journal.append(20, kLastPayload);
    journal.sync();
  }
  Reference reference;
  reference.dir = dir;
  const std::filesystem::path last = segment_files(dir).back();
  reference.last_segment = last.filename();
  reference.size = std::filesystem::file_size(last);
  reference.last_record_start = reference.size - format::kRecordHeaderBytes - kLastPayload.size();
  return reference;
}

testing::Records records_1_to_21() {
  testing::Records records = expected_range(1, 19);
  records.emplace_back(20, kLastPayload);
  records.emplace_back(21, "after the cut");
  return records;
}

// Recovery of a copy of `reference` damaged by `damage` keeps records 1..19 and cuts at the
// start of record 20; then 20 and 21 are appended and survive a reopen.
template <typename Damage>
void expect_last_record_cut(const Reference& reference, const std::filesystem::path& dir,
                            Damage damage, bool expect_cut = true) {
  testing::copy_directory(reference.dir, dir);
  const std::filesystem::path segment = dir / reference.last_segment;
  damage(segment);
  {
    Journal journal = Journal::open(dir, kTornTailOptions);
    const Recovery& recovery = journal.recovery();
    EXPECT_EQ(recovery.records, 19u);
    ASSERT_EQ(recovery.cut.has_value(), expect_cut);
    if (expect_cut) {
      EXPECT_EQ(recovery.cut->segment, segment);
      EXPECT_EQ(recovery.cut->offset, reference.last_record_start);
      EXPECT_FALSE(recovery.cut->reason.empty());
    }
    EXPECT_EQ(std::filesystem::file_size(segment), reference.last_record_start);
    EXPECT_EQ(journal.next_position(), 20u);
    journal.append(20, kLastPayload);
    journal.append(21, "after the cut");
    journal.sync();
  }
  Journal reopened = Journal::open(dir, kTornTailOptions);
  EXPECT_FALSE(reopened.recovery().cut);
  EXPECT_EQ(read_all(dir), records_1_to_21());
  std::filesystem::remove_all(dir);
}

TEST(JournalTornTail, CutAtEveryByteOfTheLastRecord) {
  TempDir scratch;
  const Reference reference = write_reference(scratch / "reference");
  ASSERT_GT(reference.last_record_start, format::kSegmentHeaderBytes) << "want several records";
  for (std::uint64_t cut = reference.last_record_start; cut < reference.size; ++cut) {
    SCOPED_TRACE("file cut at " + std::to_string(cut));
    expect_last_record_cut(
        reference, scratch / "damaged",
        [&](const std::filesystem::path& segment) { std::filesystem::resize_file(segment, cut); },
        cut > reference.last_record_start);
  }
  // The reported size of the cut.
  testing::copy_directory(reference.dir, scratch / "sized");
  std::filesystem::resize_file(scratch / "sized" / reference.last_segment, reference.size - 5);
  const Journal journal = Journal::open(scratch / "sized", kTornTailOptions);
  ASSERT_TRUE(journal.recovery().cut);
  EXPECT_EQ(journal.recovery().cut->bytes, reference.size - 5 - reference.last_record_start);
  EXPECT_NE(journal.recovery().cut->reason.find("cut short"), std::string::npos);
}

TEST(JournalTornTail, FlippedBitAnywhereInTheLastRecord) {
  TempDir scratch;
  const Reference reference = write_reference(scratch / "reference");
  const std::filesystem::path segment = reference.dir / reference.last_segment;
  const std::string original = read_file(segment);
  for (std::uint64_t byte = reference.last_record_start; byte < reference.size; ++byte) {
    // Every bit is caught (read only: no file changes, so no fsync per case)...
    for (int bit = 0; bit < 8; ++bit) {
      SCOPED_TRACE("bit " + std::to_string(bit) + " of byte " + std::to_string(byte));
      testing::flip_bit(segment, byte, bit);
      Reader reader = Reader::from_start(reference.dir);
      std::uint64_t count = 0;
      while (reader.next()) ++count;
      EXPECT_EQ(count, 19u);
      ASSERT_TRUE(reader.tail());
      EXPECT_EQ(reader.tail()->offset, reference.last_record_start);
      testing::flip_bit(segment, byte, bit);
    }
    ASSERT_EQ(read_file(segment), original);
    // ...and one bit per byte goes through recovery's cut and appending after it.
    SCOPED_TRACE("recovery, byte " + std::to_string(byte));
    expect_last_record_cut(reference, scratch / "damaged",
                           [&](const std::filesystem::path& damaged_segment) {
                             std::string bytes = original;
                             bytes[byte] = static_cast<char>(bytes[byte] ^ (1 << (byte % 8)));
                             write_file(damaged_segment, bytes);
                           });
  }
}

TEST(JournalTornTail, ZerosOrGarbageAfterTheLastRecord) {
  TempDir scratch;
  const Reference reference = write_reference(scratch / "reference");
  // Treat record 20 as the garbage: keep 1..19, then append what a crash may leave.
  const std::string kept =
      read_file(reference.dir / reference.last_segment).substr(0, reference.last_record_start);
  for (const std::string& tail :
       {std::string(4096, '\0'), std::string("\x05\x00\x00\x00garbage", 11), std::string(1, 'x')}) {
    expect_last_record_cut(reference, scratch / "damaged",
                           [&](const std::filesystem::path& segment) {
                             write_file(segment, kept + tail);
                           });
  }
}

TEST(JournalTornTail, ReaderReportsTheTailWithoutCuttingIt) {
  TempDir scratch;
  const Reference reference = write_reference(scratch / "reference");
  const std::filesystem::path segment = reference.dir / reference.last_segment;
  std::filesystem::resize_file(segment, reference.size - 1);
  Reader reader = Reader::from_start(reference.dir);
  std::uint64_t count = 0;
  while (reader.next()) ++count;
  EXPECT_EQ(count, 19u);
  ASSERT_TRUE(reader.tail());
  EXPECT_EQ(reader.tail()->offset, reference.last_record_start);
  EXPECT_EQ(std::filesystem::file_size(segment), reference.size - 1);
}

// The crash came while a new segment was being started: its header, its first record, or both
// are incomplete.
TEST(JournalTornTail, CutWhileStartingASegment) {
  TempDir scratch;
  const std::filesystem::path reference = scratch / "reference";
  std::uint64_t last = 0;
  {
    Journal journal = Journal::open(reference, kTornTailOptions);
    while (list_segments(reference).size() < 3) {
      ++last;
      journal.append(last, payload_for(last));
    }
    journal.sync();
  }
  const std::filesystem::path last_file = segment_files(reference).back();
  ASSERT_EQ(last_file.filename(), segment_file_name(last));
  const std::uint64_t size = std::filesystem::file_size(last_file);

  auto check = [&](const std::string& label, const std::function<void(const std::filesystem::path&)>& damage,
                   bool file_removed, std::uint64_t cut_offset) {
    SCOPED_TRACE(label);
    const std::filesystem::path dir = scratch / "damaged";
    testing::copy_directory(reference, dir);
    const std::filesystem::path segment = dir / last_file.filename();
    damage(segment);
    {
      Journal journal = Journal::open(dir, kTornTailOptions);
      EXPECT_EQ(journal.recovery().records, last - 1);
      EXPECT_EQ(std::filesystem::exists(segment), !file_removed);
      EXPECT_EQ(journal.recovery().segments, file_removed ? 2u : 3u);
      if (journal.recovery().cut) {
        EXPECT_EQ(journal.recovery().cut->offset, cut_offset);
      }
      EXPECT_EQ(journal.next_position(), last);
      append_range(journal, last, last + 5);
    }
    EXPECT_EQ(read_all(dir), expected_range(1, last + 5));
    std::filesystem::remove_all(dir);
  };
  for (std::uint64_t cut = 0; cut < size; ++cut) {
    const bool in_header = cut < format::kSegmentHeaderBytes;
    check("cut at " + std::to_string(cut),
          [&](const std::filesystem::path& segment) { std::filesystem::resize_file(segment, cut); },
          in_header, in_header ? 0 : format::kSegmentHeaderBytes);
  }
  check("zeroed header",
        [&](const std::filesystem::path& segment) {
          std::string bytes = read_file(segment);
          std::fill(bytes.begin(), bytes.begin() + format::kSegmentHeaderBytes, '\0');
          write_file(segment, bytes);
        },
        true, 0);
}

}  // namespace
}  // namespace yoke::journal
