// The daemon's one check of well-formed UTF-8 (daemon/text/utf8_sequence.h), at the edges of
// each lead byte's range. Source: the Unicode Standard's table of well-formed byte sequences
// (Table 3-7 of its chapter 3).

#include "daemon/text/utf8_sequence.h"

#include <gtest/gtest.h>

#include <string_view>

namespace yoke::daemon::utf8 {
namespace {

std::size_t length_of(std::string_view bytes) { return sequence_length(bytes, 0); }

TEST(Utf8Sequence, WellFormedSequencesAtEachRangesEdges) {
  EXPECT_EQ(length_of("\xc2\x80"), 2u);          // U+0080
  EXPECT_EQ(length_of("\xdf\xbf"), 2u);          // U+07FF
  EXPECT_EQ(length_of("\xe0\xa0\x80"), 3u);      // U+0800
  EXPECT_EQ(length_of("\xed\x9f\xbf"), 3u);      // U+D7FF, below the surrogates
  EXPECT_EQ(length_of("\xee\x80\x80"), 3u);      // U+E000, above them
  EXPECT_EQ(length_of("\xef\xbf\xbd"), 3u);      // U+FFFD
  EXPECT_EQ(length_of("\xf0\x90\x80\x80"), 4u);  // U+10000
  EXPECT_EQ(length_of("\xf4\x8f\xbf\xbf"), 4u);  // U+10FFFF
}

TEST(Utf8Sequence, IllFormedOnesHaveNoLength) {
  EXPECT_EQ(length_of("a"), 0u);                 // ASCII is not a multi-byte sequence
  EXPECT_EQ(length_of("\x80"), 0u);              // a continuation byte first
  EXPECT_EQ(length_of("\xc0\xaf"), 0u);          // overlong '/'
  EXPECT_EQ(length_of("\xc1\xbf"), 0u);          // overlong
  EXPECT_EQ(length_of("\xe0\x9f\xbf"), 0u);      // overlong U+07FF
  EXPECT_EQ(length_of("\xed\xa0\x80"), 0u);      // surrogate U+D800
  EXPECT_EQ(length_of("\xf0\x8f\xbf\xbf"), 0u);  // overlong U+FFFF
  EXPECT_EQ(length_of("\xf4\x90\x80\x80"), 0u);  // U+110000
  EXPECT_EQ(length_of("\xf5\x80\x80\x80"), 0u);  // no such lead byte
  EXPECT_EQ(length_of("\xe2\x82"), 0u);          // cut short
  EXPECT_EQ(length_of("\xe2\x28\xa1"), 0u);      // a third byte that does not continue
}

TEST(Utf8Sequence, ReadsAtAnOffsetAndNotPastTheEnd) {
  const std::string_view text = "ab\xc3\xa9z\xe2\x82";
  EXPECT_EQ(sequence_length(text, 2), 2u);
  EXPECT_EQ(sequence_length(text, 5), 0u);
}

}  // namespace
}  // namespace yoke::daemon::utf8
