// Snapshot files (daemon/snapshots/FORMAT.md): round trips, every kind of damage, and the
// directory that keeps the newest few. The byte offsets below come from FORMAT.md's table.
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/journal/crc32c.h"
#include "daemon/journal/journal_error.h"
#include "daemon/snapshots/snapshot_file.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

using journal::testing::flip_bit;
using journal::testing::read_file;
using journal::testing::write_file;
using testing::TempDir;

constexpr std::size_t kHeaderBytes = 8 + 4 + 8 + 4 + 4;  // magic, version, J, P, CRC
constexpr std::size_t kFrameBytes = 8 + 4;                // length, CRC
constexpr std::size_t kEndBytes = 8;

v1::SnapshotRecord sample_record(const std::string& pool, std::uint64_t seq) {
  v1::SnapshotRecord record;
  record.set_pool(pool);
  record.set_seq(seq);
  record.mutable_config()->set_mode(v1::MODE_MAX_CARDINALITY);
  record.mutable_config()->mutable_limits()->set_max_vertices(500);
  v1::ClientMark& mark = *record.add_clients();
  mark.set_client_id("ferry-" + std::to_string(seq));
  mark.set_last_batch(seq * 3);
  mark.set_seq(seq);
  record.set_weight(-17 * static_cast<std::int64_t>(seq));
  record.set_pairs(seq + 1);
  record.set_vertices(seq + 2);
  record.set_edges(seq + 3);
  record.set_wall_time_unix_us(1'700'000'000'000'000 + seq);
  record.set_engine_state_format(1);
  // Opaque bytes, zeros included.
  std::string state(40 + seq, '\0');
  for (std::size_t i = 0; i < state.size(); i += 3) state[i] = static_cast<char>(i * 7 + seq);
  record.set_engine_state(state);
  record.set_journal_position(1234);
  return record;
}

std::vector<v1::SnapshotRecord> sample_records() {
  return {sample_record("airport", 3), sample_record("default", 41), sample_record("quay", 7)};
}

std::string little_endian(std::uint64_t value, int bytes) {
  std::string out;
  for (int i = 0; i < bytes; ++i) out.push_back(static_cast<char>((value >> (8 * i)) & 0xFF));
  return out;
}

// A file built field by field, for damage the writer cannot make.
std::string forged_file(std::uint32_t version, std::uint64_t journal_position, std::uint32_t pools,
                        const std::vector<std::string>& payloads) {
  std::string bytes = "YOKESNAP" + little_endian(version, 4) + little_endian(journal_position, 8) +
                      little_endian(pools, 4);
  bytes += little_endian(journal::crc32c(bytes), 4);
  for (const std::string& payload : payloads) {
    bytes += little_endian(payload.size(), 8) + little_endian(journal::crc32c(payload), 4) + payload;
  }
  return bytes + "SNAPEND1";
}

class SnapshotFileTest : public ::testing::Test {
 protected:
  std::filesystem::path write_sample() {
    write_snapshot_file(path_, 1234, sample_records());
    return path_;
  }
  // The damage message, or "" when the file reads fine.
  std::string damage() {
    try {
      read_snapshot_file(path_);
    } catch (const SnapshotDamage& error) {
      return error.what();
    }
    return "";
  }
  std::size_t first_payload_bytes() { return sample_records()[0].SerializeAsString().size(); }

  TempDir dir_;
  std::filesystem::path path_ = dir_ / "snapshot-00000000000000001234.yks";
};

TEST_F(SnapshotFileTest, RoundTripOfSeveralRecords) {
  write_sample();
  EXPECT_FALSE(std::filesystem::exists(dir_ / "snapshot-00000000000000001234.yks.tmp"));
  const SnapshotContents contents = read_snapshot_file(path_);
  EXPECT_EQ(contents.position, 1234u);
  const std::vector<v1::SnapshotRecord> expected = sample_records();
  ASSERT_EQ(contents.pools.size(), expected.size());
  for (std::size_t i = 0; i < expected.size(); ++i) {
    EXPECT_EQ(contents.pools[i].SerializeAsString(), expected[i].SerializeAsString()) << i;
  }
  // The layout of FORMAT.md: header, framed entries, end marker.
  const std::string bytes = read_file(path_);
  std::size_t size = kHeaderBytes + kEndBytes;
  for (const auto& record : expected) size += kFrameBytes + record.SerializeAsString().size();
  EXPECT_EQ(bytes.size(), size);
  EXPECT_EQ(bytes.substr(0, 8), "YOKESNAP");
  EXPECT_EQ(bytes.substr(12, 8), little_endian(1234, 8));
  EXPECT_EQ(bytes.substr(20, 4), little_endian(3, 4));
  EXPECT_EQ(bytes.substr(bytes.size() - 8), "SNAPEND1");
  EXPECT_EQ(bytes, forged_file(1, 1234, 3,
                               {expected[0].SerializeAsString(), expected[1].SerializeAsString(),
                                expected[2].SerializeAsString()}));
}

// The writer hands a large engine state to the file from the record itself, in pieces around
// Protobuf's other bytes: the file must hold exactly the records' serializations all the same
// (a state of megabytes, one just past a small write's reach, one empty; the fields after it).
TEST_F(SnapshotFileTest, LargeEngineStatesAreWrittenAsTheirSerializations) {
  std::vector<v1::SnapshotRecord> records = sample_records();
  std::string big(3 * 1024 * 1024 + 17, '\0');
  for (std::size_t i = 0; i < big.size(); ++i) big[i] = static_cast<char>(i * 131 % 251);
  records[0].set_engine_state(big);
  records[1].set_engine_state(std::string(16 * 1024 + 1, 'y'));
  records[1].set_incarnation(77);
  records[2].clear_engine_state();
  for (int i = 0; i < 300; ++i) *records[2].add_clients() = records[0].clients(0);
  write_snapshot_file(path_, 1234, records);
  EXPECT_EQ(read_file(path_),
            forged_file(1, 1234, 3,
                        {records[0].SerializeAsString(), records[1].SerializeAsString(),
                         records[2].SerializeAsString()}));
  const SnapshotContents contents = read_snapshot_file(path_);
  ASSERT_EQ(contents.pools.size(), 3u);
  EXPECT_EQ(contents.pools[0].engine_state(), big);
}

TEST_F(SnapshotFileTest, RoundTripOfNoRecordsAndRewrite) {
  write_snapshot_file(path_, 9, {});
  SnapshotContents contents = read_snapshot_file(path_);
  EXPECT_EQ(contents.position, 9u);
  EXPECT_TRUE(contents.pools.empty());
  // Writing again replaces the file whole.
  write_sample();
  contents = read_snapshot_file(path_);
  EXPECT_EQ(contents.pools.size(), 3u);
}

TEST_F(SnapshotFileTest, BadMagic) {
  write_sample();
  flip_bit(path_, 3, 0);
  EXPECT_NE(damage().find("header"), std::string::npos) << damage();
}

TEST_F(SnapshotFileTest, HeaderChecksum) {
  write_sample();
  flip_bit(path_, 14, 5);  // inside J
  EXPECT_NE(damage().find("header checksum"), std::string::npos) << damage();
  write_sample();
  flip_bit(path_, 25, 1);  // inside the checksum itself
  EXPECT_NE(damage().find("header checksum"), std::string::npos) << damage();
}

TEST_F(SnapshotFileTest, UnknownVersionWithAGoodChecksum) {
  write_file(path_, forged_file(2, 1234, 0, {}));
  EXPECT_NE(damage().find("version 2"), std::string::npos) << damage();
  write_file(path_, forged_file(1, 1234, 0, {}));
  EXPECT_EQ(damage(), "");  // the forger itself is right
}

TEST_F(SnapshotFileTest, CutEntry) {
  write_sample();
  // Inside the first entry's payload.
  std::filesystem::resize_file(path_, kHeaderBytes + kFrameBytes + first_payload_bytes() / 2);
  EXPECT_NE(damage().find("cut"), std::string::npos) << damage();
  write_sample();
  // Inside the first entry's frame.
  std::filesystem::resize_file(path_, kHeaderBytes + 5);
  EXPECT_NE(damage().find("ends early"), std::string::npos) << damage();
  write_sample();
  // Inside the header.
  std::filesystem::resize_file(path_, 10);
  EXPECT_NE(damage().find("ends early"), std::string::npos) << damage();
  write_file(path_, "");
  EXPECT_NE(damage().find("ends early"), std::string::npos) << damage();
}

TEST_F(SnapshotFileTest, LengthBeyondTheFile) {
  write_sample();
  flip_bit(path_, kHeaderBytes + 6, 7);  // the length's high bytes
  EXPECT_NE(damage().find("pool entry 0 is cut"), std::string::npos) << damage();
}

TEST_F(SnapshotFileTest, EntryChecksum) {
  write_sample();
  const std::size_t second_entry = kHeaderBytes + kFrameBytes + first_payload_bytes();
  flip_bit(path_, second_entry + kFrameBytes + 4, 2);  // inside the second payload
  EXPECT_NE(damage().find("pool entry 1 fails its checksum"), std::string::npos) << damage();
  write_sample();
  flip_bit(path_, second_entry + 9, 0);  // the second entry's checksum itself
  EXPECT_NE(damage().find("pool entry 1 fails its checksum"), std::string::npos) << damage();
}

TEST_F(SnapshotFileTest, EntryThatIsNotARecord) {
  write_file(path_, forged_file(1, 5, 1, {std::string("\xff\xff\xff", 3)}));
  EXPECT_NE(damage().find("not a SnapshotRecord"), std::string::npos) << damage();
}

TEST_F(SnapshotFileTest, MoreEntriesAnnouncedThanPresent) {
  const std::string payload = sample_record("quay", 1).SerializeAsString();
  write_file(path_, forged_file(1, 5, 2, {payload}));
  EXPECT_NE(damage(), "");
}

TEST_F(SnapshotFileTest, MissingEndMarker) {
  write_sample();
  const std::uint64_t size = std::filesystem::file_size(path_);
  std::filesystem::resize_file(path_, size - kEndBytes);
  EXPECT_NE(damage().find("end marker"), std::string::npos) << damage();
  write_sample();
  std::filesystem::resize_file(path_, size - 3);
  EXPECT_NE(damage().find("end marker"), std::string::npos) << damage();
  write_sample();
  flip_bit(path_, size - 1, 0);
  EXPECT_NE(damage().find("end marker"), std::string::npos) << damage();
}

TEST_F(SnapshotFileTest, TrailingBytes) {
  write_sample();
  write_file(path_, read_file(path_) + "x");
  EXPECT_NE(damage().find("end marker"), std::string::npos) << damage();
  write_sample();
  write_file(path_, read_file(path_) + "SNAPEND1");
  EXPECT_NE(damage(), "");
}

TEST_F(SnapshotFileTest, EveryFlippedBitIsCaught) {
  write_snapshot_file(path_, 77, {sample_record("dock", 2)});
  const std::string good = read_file(path_);
  for (std::size_t offset = 0; offset < good.size(); ++offset) {
    flip_bit(path_, offset, static_cast<int>(offset % 8));
    EXPECT_NE(damage(), "") << "offset " << offset;
    flip_bit(path_, offset, static_cast<int>(offset % 8));
  }
  EXPECT_EQ(damage(), "");
}

TEST_F(SnapshotFileTest, MissingFileIsNotDamage) {
  EXPECT_THROW(read_snapshot_file(dir_ / "nowhere.yks"), journal::Error);
  try {
    read_snapshot_file(dir_ / "nowhere.yks");
  } catch (const SnapshotDamage&) {
    ADD_FAILURE() << "a missing file is an I/O error, not damage";
  } catch (const journal::Error&) {
  }
}

TEST(SnapshotDirectory, NamesFilesByJournalPosition) {
  TempDir dir;
  const SnapshotDirectory store(dir / "a" / "b", 2);  // created, parents too
  EXPECT_TRUE(std::filesystem::is_directory(dir / "a" / "b"));
  EXPECT_EQ(store.path_for(42).filename(), "snapshot-00000000000000000042.yks");
  EXPECT_EQ(store.path_for(~std::uint64_t{0}).filename(), "snapshot-18446744073709551615.yks");
  EXPECT_TRUE(store.positions().empty());
  EXPECT_FALSE(store.oldest_needed().has_value());
}

TEST(SnapshotDirectory, KeepsTheNewestAndRemovesTemporaryFiles) {
  TempDir dir;
  SnapshotDirectory store(dir.path(), 2);
  const std::vector<v1::SnapshotRecord> records = {sample_record("quay", 1)};
  EXPECT_EQ(store.write(10, records), store.path_for(10).string());
  store.write(300, records);
  EXPECT_EQ(store.positions(), (std::vector<std::uint64_t>{300, 10}));
  // Leftovers of a crash mid-write, and files that are not snapshots.
  write_file(dir / "snapshot-00000000000000000999.yks.tmp", "half");
  write_file(dir / "other.tmp", "x");
  write_file(dir / "notes.txt", "keep me");
  write_file(dir / "snapshot-7.yks", "short name");
  write_file(dir / "snapshot-0000000000000000000x.yks", "not digits");
  EXPECT_EQ(store.positions(), (std::vector<std::uint64_t>{300, 10}));
  store.write(25, records);  // positions need not arrive in order
  EXPECT_EQ(store.positions(), (std::vector<std::uint64_t>{300, 25}));
  EXPECT_FALSE(std::filesystem::exists(store.path_for(10)));
  EXPECT_FALSE(std::filesystem::exists(dir / "snapshot-00000000000000000999.yks.tmp"));
  EXPECT_FALSE(std::filesystem::exists(dir / "other.tmp"));
  EXPECT_TRUE(std::filesystem::exists(dir / "notes.txt"));
  EXPECT_TRUE(std::filesystem::exists(dir / "snapshot-7.yks"));
  EXPECT_TRUE(std::filesystem::exists(dir / "snapshot-0000000000000000000x.yks"));
  store.write(4000, records);
  EXPECT_EQ(store.positions(), (std::vector<std::uint64_t>{4000, 300}));
  EXPECT_EQ(store.oldest_needed(), 300u);
  EXPECT_EQ(read_snapshot_file(store.path_for(4000)).position, 4000u);
}

TEST(SnapshotDirectory, KeepZeroMeansOne) {
  TempDir dir;
  SnapshotDirectory store(dir.path(), 0);
  store.write(1, {});
  store.write(2, {});
  EXPECT_EQ(store.positions(), (std::vector<std::uint64_t>{2}));
}

}  // namespace
}  // namespace yoke::daemon
