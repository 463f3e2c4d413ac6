#include <gtest/gtest.h>

#include <string>

#include "daemon/logging/log_escape.h"

namespace yoke::daemon {
namespace {

std::string json(std::string_view text) {
  std::string out;
  append_json_string(out, text);
  return out;
}

std::string value(std::string_view text) {
  std::string out;
  append_text_value(out, text);
  return out;
}

TEST(LogEscape, JsonStrings) {
  EXPECT_EQ(json("plain"), "\"plain\"");
  EXPECT_EQ(json(""), "\"\"");
  EXPECT_EQ(json("q\"b\\"), "\"q\\\"b\\\\\"");
  EXPECT_EQ(json("\n\r\t\b\f"), "\"\\n\\r\\t\\b\\f\"");
  EXPECT_EQ(json(std::string("\x00\x1f\x7f", 3)), "\"\\u0000\\u001f\\u007f\"");
  // Valid UTF-8 of 2, 3 and 4 bytes passes through.
  EXPECT_EQ(json("\xc3\xa9\xe2\x82\xac\xf0\x9f\x9a\xb2"), "\"\xc3\xa9\xe2\x82\xac\xf0\x9f\x9a\xb2\"");
  // Invalid: a lone continuation, a truncated sequence, an overlong '/', a surrogate.
  EXPECT_EQ(json("\x80"), "\"\\ufffd\"");
  EXPECT_EQ(json("\xe2\x82"), "\"\\ufffd\\ufffd\"");
  EXPECT_EQ(json("\xc0\xaf"), "\"\\ufffd\\ufffd\"");
  EXPECT_EQ(json("\xed\xa0\x80"), "\"\\ufffd\\ufffd\\ufffd\"");
}

TEST(LogEscape, TextValues) {
  EXPECT_EQ(value("default"), "default");
  EXPECT_EQ(value("-12.5"), "-12.5");
  EXPECT_EQ(value(""), "\"\"");
  EXPECT_EQ(value("self loop"), "\"self loop\"");
  EXPECT_EQ(value("a=b"), "\"a=b\"");  // would read as another field
  EXPECT_EQ(value("x\"y\\z"), "\"x\\\"y\\\\z\"");
  EXPECT_EQ(value(std::string("\t\x00", 2)), "\"\\t\\x00\"");
  EXPECT_EQ(value("caf\xc3\xa9"), "\"caf\xc3\xa9\"");
  EXPECT_EQ(value("\xff"), "\"\\xff\"");
}

TEST(LogEscape, TextMessagesKeepSpacesAndEscapeControls) {
  std::string out;
  append_text_message(out, "pool \"a\" ready\r\n\xc3\xa9\xfe");
  EXPECT_EQ(out, "pool \"a\" ready\\r\\n\xc3\xa9\\xfe");
}

}  // namespace
}  // namespace yoke::daemon
