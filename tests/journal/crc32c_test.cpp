#include "daemon/journal/crc32c.h"

#include <gtest/gtest.h>

#include <string>

namespace yoke::journal {
namespace {

std::string bytes_from(int first, int step, int count) {
  std::string bytes;
  for (int i = 0; i < count; ++i) bytes.push_back(static_cast<char>(first + step * i));
  return bytes;
}

// The definition, one bit at a time: the reference for the table-driven version.
std::uint32_t bitwise_crc32c(std::string_view data) {
  std::uint32_t crc = 0xFFFFFFFFu;
  for (const char c : data) {
    crc ^= static_cast<unsigned char>(c);
    for (int bit = 0; bit < 8; ++bit) crc = (crc >> 1) ^ ((crc & 1u) ? 0x82F63B78u : 0u);
  }
  return ~crc;
}

// Check values: "123456789" is the standard check string of the CRC catalogue (common
// knowledge); the 32-byte vectors are from RFC 3720 (iSCSI), appendix B.4.
TEST(Crc32c, KnownVectors) {
  EXPECT_EQ(crc32c("123456789"), 0xE3069283u);
  EXPECT_EQ(crc32c(""), 0x00000000u);
  EXPECT_EQ(crc32c(std::string(32, '\0')), 0x8A9136AAu);
  EXPECT_EQ(crc32c(std::string(32, '\xFF')), 0x62A8AB43u);
  EXPECT_EQ(crc32c(bytes_from(0, 1, 32)), 0x46DD794Eu);
  EXPECT_EQ(crc32c(bytes_from(31, -1, 32)), 0x113FDB5Cu);
}

TEST(Crc32c, MatchesBitwiseDefinitionAtEveryLengthAndAlignment) {
  const std::string data = bytes_from(7, 13, 300);
  for (std::size_t start = 0; start < 8; ++start) {
    for (std::size_t length = 0; start + length <= data.size(); ++length) {
      const std::string_view piece = std::string_view(data).substr(start, length);
      ASSERT_EQ(crc32c(piece), bitwise_crc32c(piece)) << "start " << start << " length " << length;
      // The tables, which the instruction replaces on CPUs that have it, are checked here too.
      ASSERT_EQ(crc32c_extend_by_tables(0, piece), bitwise_crc32c(piece))
          << "start " << start << " length " << length;
    }
  }
}

TEST(Crc32c, ExtendEqualsWholeAtEverySplit) {
  const std::string data = bytes_from(1, 37, 100);
  for (std::size_t split = 0; split <= data.size(); ++split) {
    const std::string_view whole(data);
    EXPECT_EQ(crc32c_extend(crc32c(whole.substr(0, split)), whole.substr(split)), crc32c(whole));
    EXPECT_EQ(crc32c_extend_by_tables(crc32c(whole.substr(0, split)), whole.substr(split)),
              crc32c(whole));
  }
}

}  // namespace
}  // namespace yoke::journal
