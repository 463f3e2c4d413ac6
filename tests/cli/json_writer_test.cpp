#include <gtest/gtest.h>

#include <limits>
#include <sstream>

#include "tools/cli/json_writer.h"

namespace yoke::cli {
namespace {

TEST(JsonWriter, NestsObjectsAndArraysWithCommas) {
  std::ostringstream out;
  JsonWriter json(out);
  json.begin_object();
  json.key("a");
  json.integer(-3);
  json.key("b");
  json.begin_array();
  json.begin_array();
  json.unsigned_integer(18446744073709551615ULL);
  json.unsigned_integer(0);
  json.end_array();
  json.begin_array();
  json.end_array();
  json.end_array();
  json.key("c");
  json.null();
  json.key("d");
  json.boolean(false);
  json.key("e");
  json.number(1.5, 3);
  json.end_object();
  json.finish();
  EXPECT_EQ(out.str(),
            "{\"a\":-3,\"b\":[[18446744073709551615,0],[]],\"c\":null,\"d\":false,\"e\":1.500}\n");
}

TEST(JsonWriter, EscapesStrings) {
  std::ostringstream out;
  JsonWriter json(out);
  json.string("say \"hi\"\\\n\t\x01");
  json.finish();
  EXPECT_EQ(out.str(), "\"say \\\"hi\\\"\\\\\\n\\t\\u0001\"\n");
}

TEST(JsonWriter, WritesWideIntegersExactly) {
  std::ostringstream out;
  JsonWriter json(out);
  json.begin_array();
  json.wide_integer(Int128{0});
  json.wide_integer(Int128{std::numeric_limits<std::int64_t>::max()} * 4);
  json.wide_integer(-(Int128{1} << 126) * 2);  // the smallest Int128
  json.end_array();
  json.finish();
  EXPECT_EQ(out.str(),
            "[0,36893488147419103228,-170141183460469231731687303715884105728]\n");
}

TEST(JsonWriter, LineBreaksGoAfterTheComma) {
  std::ostringstream out;
  JsonWriter json(out);
  json.begin_array();
  json.line_break();
  json.integer(1);
  json.line_break();
  json.integer(2);
  json.end_array();
  json.finish();
  EXPECT_EQ(out.str(), "[\n1,\n2]\n");
}

}  // namespace
}  // namespace yoke::cli
